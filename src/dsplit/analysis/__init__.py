"""dsplit.analysis"""
