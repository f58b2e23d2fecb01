"""What the first spin-allowed d–d band of dⁿ measures in octahedral and tetrahedral fields.

Weak-field term splittings (Orgel diagrams) and strong-field states
(Tanabe–Sugano diagrams), as tabulated in Lever, Inorganic Electronic
Spectroscopy, 2nd ed., Elsevier 1984, and Figgis & Hitchman, Ligand Field Theory
and Its Applications, 2000 (from memory):

* A single ⁵D/²D-derived band (d1, d4 HS, d6 HS, d9) is the one-electron gap: ν = Δ.
* ⁴A2g → ⁴T2g (Oh d3) and ³A2g → ³T2g (Oh d8) give ν1 = Δo exactly: ⁴T2g/³T2g
  occur once and have no partner to mix with.  By the hole/inversion relation
  (Td dⁿ behaves like Oh d¹⁰⁻ⁿ), Td d2 (³A2 → ³T2) and d7 (⁴A2 → ⁴T2) give ν1 = Δt.
* Oh d2 and d7 HS (and Td d3, d8): the ground T1(F) mixes with T1(P) through
  Racah B, so ν1 ≠ Δ; the T2 and A2 bands differ by exactly Δ.
* d5 HS (⁶A1) has no spin-allowed d–d band; d0 and d10 have none at all.
* Low-spin Oh d4, d5, d7: the bands involve B and C.  Oh d6 LS: ¹A1g → ¹T1g at
  ≈ Δo − C and → ¹T2g at ≈ Δo + 16B − C (strong-field limit).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class BandMeaning:
    """What the lowest spin-allowed d–d band of a dⁿ ion measures."""

    measures_delta_directly: bool
    text: str
    racah_b_enters: bool = False
    has_spin_allowed_band: bool = True


_DIRECT = "first spin-allowed band {t}: ν1 = {d} exactly"
_B_MIX = (
    "first band {t}: ν1 depends on Racah B through {m} mixing, so ν1 ≠ {d}; "
    "ν({a}) − ν({b}) = {d} exactly"
)

# (d_count, spin) → (direct?, text, B enters?) for the octahedral field.
_OH: dict[tuple[int, str], tuple[bool, str, bool]] = {
    (1, "high"): (True, _DIRECT.format(t="²T2g → ²Eg", d="Δo"), False),
    (2, "high"): (False, _B_MIX.format(t="³T1g(F) → ³T2g", m="³T1g(F)–³T1g(P)", a="³A2g", b="³T2g", d="Δo"), True),
    (3, "high"): (True, _DIRECT.format(t="⁴A2g → ⁴T2g", d="Δo"), False),
    (4, "high"): (True, _DIRECT.format(t="⁵Eg → ⁵T2g", d="Δo") + " (Jahn–Teller splitting broadens it)", False),
    (4, "low"): (False, "ground ³T1g (t2g⁴): spin-allowed bands to other triplets depend on Δo, B and C", True),
    (5, "high"): (False, "⁶A1g: no spin-allowed d–d band; only weak spin-forbidden bands, which depend on Δo, B and C", True),
    (5, "low"): (False, "ground ²T2g (t2g⁵): spin-allowed bands to other doublets depend on Δo, B and C", True),
    (6, "high"): (True, _DIRECT.format(t="⁵T2g → ⁵Eg", d="Δo"), False),
    (6, "low"): (False, "¹A1g → ¹T1g: ν1 ≈ Δo − C and ν2(¹T2g) ≈ Δo + 16B − C (strong-field limit); ν2 − ν1 ≈ 16B", True),
    (7, "high"): (False, _B_MIX.format(t="⁴T1g(F) → ⁴T2g", m="⁴T1g(F)–⁴T1g(P)", a="⁴A2g", b="⁴T2g", d="Δo"), True),
    (7, "low"): (False, "ground ²Eg (t2g⁶eg¹): spin-allowed bands to other doublets depend on Δo, B and C", True),
    (8, "high"): (True, _DIRECT.format(t="³A2g → ³T2g", d="Δo"), False),
    (9, "high"): (True, _DIRECT.format(t="²Eg → ²T2g", d="Δo") + " (Jahn–Teller splitting broadens it)", False),
}

# Tetrahedral dⁿ: high spin only.
_TD: dict[int, tuple[bool, str, bool]] = {
    1: (True, _DIRECT.format(t="²E → ²T2", d="Δt"), False),
    2: (True, _DIRECT.format(t="³A2 → ³T2", d="Δt"), False),
    3: (False, _B_MIX.format(t="⁴T1(F) → ⁴T2", m="⁴T1(F)–⁴T1(P)", a="⁴A2", b="⁴T2", d="Δt"), True),
    4: (True, _DIRECT.format(t="⁵T2 → ⁵E", d="Δt"), False),
    5: (False, "⁶A1: no spin-allowed d–d band; only weak spin-forbidden bands, which depend on Δt, B and C", True),
    6: (True, _DIRECT.format(t="⁵E → ⁵T2", d="Δt"), False),
    7: (True, _DIRECT.format(t="⁴A2 → ⁴T2", d="Δt") + " (often in the near infrared)", False),
    8: (False, _B_MIX.format(t="³T1(F) → ³T2", m="³T1(F)–³T1(P)", a="³A2", b="³T2", d="Δt"), True),
    9: (True, _DIRECT.format(t="²T2 → ²E", d="Δt"), False),
}

_NO_LS = {1, 2, 3, 8, 9}  # Oh dⁿ with a single spin state


def band_meaning(d_count: int, geometry_family: str, spin: str = "high") -> BandMeaning:
    """What the first spin-allowed band measures for dⁿ in 'octahedral' or 'tetrahedral'.

    ``spin`` is 'high' or 'low'; for dⁿ with only one spin state in the field
    either value is accepted.
    """
    if spin not in ("high", "low"):
        raise ValueError("spin must be 'high' or 'low'")
    if d_count in (0, 10):
        return BandMeaning(False, f"d{d_count}: no d–d band", False, False)
    if not 1 <= d_count <= 9:
        raise ValueError(f"d_count must be 0..10 (got {d_count})")
    if geometry_family == "octahedral":
        high = spin == "high" or d_count in _NO_LS
        single = d_count in _NO_LS
        direct, text, b = _OH[(d_count, "high" if high else "low")]
    elif geometry_family == "tetrahedral":
        if spin == "low" and d_count in (3, 4, 5, 6):
            text = f"low-spin tetrahedral d{d_count} is not treated (Δt is small; practically unknown)"
            return BandMeaning(False, text, False, False)
        high = True
        direct, text, b = _TD[d_count]
        single = d_count not in (3, 4, 5, 6)
    else:
        text = f"no rule for geometry family {geometry_family!r} (only octahedral, tetrahedral)"
        return BandMeaning(False, text, False, False)
    allowed = not (d_count == 5 and high)
    state = "one spin state" if single else f"{spin} spin"
    return BandMeaning(direct, f"d{d_count} {geometry_family}, {state}: {text}", b, allowed)
