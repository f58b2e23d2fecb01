"""dsplit: d-orbital splitting of transition-metal complexes.

Stages (one-way data flow): spec -> Complex -> Calculation -> OrbitalTable ->
Splitting -> Comparison -> Report -> Archive.  See DEVELOPERS.md.
"""

__version__ = "0.1.0"
