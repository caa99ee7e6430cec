"""Descent in symmetry, above the analysis layer: distortion ladders (:mod:`.ladder`) and the
site-symmetry tools (:mod:`.sites`)."""

from __future__ import annotations

from .ladder import (
    DEFAULT_LADDER_TOLERANCES,
    Descent,
    DistortionLadder,
    LadderStep,
    distortion_ladder,
)
from .sites import (
    InducedRepresentation,
    OrbitInduction,
    Site,
    SiteAnalysis,
    check_induced,
    induced_representation,
    site_analysis,
)

__all__ = [
    "DEFAULT_LADDER_TOLERANCES",
    "Descent",
    "DistortionLadder",
    "InducedRepresentation",
    "LadderStep",
    "OrbitInduction",
    "Site",
    "SiteAnalysis",
    "check_induced",
    "distortion_ladder",
    "induced_representation",
    "site_analysis",
]
