"""dsplit.archive: one folder per run, manifests, atomic commits, an ase.db index, queries.

Public entry points: ``dsplit.archive.store.compute_archived`` / ``run_archived``
(cache lookup + run + commit + index) and ``dsplit.archive.paths.default_archive_root``.
"""
