"""dsplit.geometry"""
