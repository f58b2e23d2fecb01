"""dsplit.qc"""
