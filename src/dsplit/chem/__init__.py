"""dsplit.chem"""
