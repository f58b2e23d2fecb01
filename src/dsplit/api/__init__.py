"""dsplit.api: the jobs of the command line as Python functions (see dsplit.api.public).

Modules: public (build, compute, spin_states, optimize, load_result, open_archive and their
result types), compute (one run in data-flow order), estimators (which calculations the
splitting estimators need), spin (spin-state ladder, optimisation), build (summaries,
isomers, geometry files), terms (ligand-field terms without quantum chemistry).
"""
