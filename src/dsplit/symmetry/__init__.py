"""dsplit.symmetry"""
