"""dsplit.models: ligand-field models and checks (pure numpy/scipy).

aom (angular overlap matrix), crystal_field (point charges), levels (degenerate
sets, d composition), fit (eσ/eπ least squares), filling (dⁿ, CFSE, spin state,
μ_spin-only), bands (what the first d–d band measures), spectrochemical
(series, weak/strong field), checks (verdicts).
"""
