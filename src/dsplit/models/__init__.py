"""dsplit.models: ligand-field models and checks (pure numpy/scipy).

aom (angular overlap matrix), crystal_field (point charges), levels (degenerate
sets, d composition), fit (eσ/eπ least squares), filling (dⁿ, CFSE, spin state,
μ_spin-only), bands (what the first d–d band measures), spectrochemical
(series, weak/strong field), checks (verdicts).

The dⁿ ligand-field multiplet model: racah (repulsion integrals from A, B, C), determinants
(strings, E_pq, S², orbital rotations of CI vectors), multiplet (Hamiltonian, terms, irreps,
configurations), multiplet_lsq (h, B, C fitted to states), field_shape (Δ·ĥ along a
geometry), band_fit (Δ, B, C from measured bands), term_curves (term-diagram data), free_ion
(free-ion B, β).
"""
