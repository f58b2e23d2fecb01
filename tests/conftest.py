"""Shared test helpers."""

from __future__ import annotations

import pytest

from dsplit.geometry.build import ComplexRequest, build_complex


def make(metal: str, geometry: str, ligands: dict, **kw):
    """Build a complex from a few fields (name defaults to 't')."""
    return build_complex(ComplexRequest(name=kw.pop("name", "t"), metal=metal, geometry=geometry,
                                        ligands=ligands, **kw))


@pytest.fixture
def build():
    return make
