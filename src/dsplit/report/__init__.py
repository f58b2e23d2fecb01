"""dsplit.report"""
