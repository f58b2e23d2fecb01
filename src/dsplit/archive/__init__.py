"""dsplit.archive"""
