"""dsplit: d-orbital splitting of transition-metal complexes.

Stages (one-way data flow): spec -> Complex -> Calculation -> OrbitalTable ->
Splitting -> Comparison -> Report -> Archive.  See DEVELOPERS.md.

The Python API (loaded on first use, so ``import dsplit`` stays light)::

    import dsplit
    run = dsplit.compute("inputs/ti-fluorido-violet.toml", out="violet", basis="3-21G")
    run.recommended.delta_cm1, run.ligand_field

build, compute, spin_states, optimize, load_result, open_archive: see dsplit.api.public.
"""

__version__ = "0.1.0"

_API = ("build", "compute", "spin_states", "optimize", "load_result", "open_archive", "as_spec", "RunResult",
        "Estimate", "Archive")
__all__ = ["__version__", *_API]


def __getattr__(name: str):
    if name in _API:
        from dsplit.api import public

        return getattr(public, name)
    raise AttributeError(f"module 'dsplit' has no attribute {name!r}")
