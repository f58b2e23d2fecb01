"""dsplit.study"""
