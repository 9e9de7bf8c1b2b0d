"""Cross-section properties of IFC profile definitions, one function per profile class.

INTERFACE (stable; the reader depends on it):

    section_of(profile) -> ProfileSection     # raises UnsupportedProfile
    PROFILE_FUNCTIONS: dict[str, Callable[[entity], ProfileSection]]

All numbers of a ProfileSection are in the *file's* length unit (area in its square); the
reader scales them to SI. Implementation: see the registry below.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any


class UnsupportedProfile(ValueError):
    """A profile class (or a profile's content) this module cannot compute."""


@dataclass(frozen=True)
class ProfileSection:
    area: float                 # gross area, file length unit squared
    r_min: float                # least principal radius of gyration, file length unit
    shape: str                  # family: round-bar, round-tube, square-bar, flat-bar, rect-tube,
                                #   I, L, T, U, C, Z, ellipse, arbitrary, composite
    source: str                 # e.g. "IfcIShapeProfileDef #19"
    name: str | None = None     # IfcProfileDef.ProfileName
    dims: dict[str, float] = field(default_factory=dict)  # d, h, b, tf, tw, t (file length unit)


PROFILE_FUNCTIONS: dict[str, Callable[[Any], ProfileSection]] = {}


def section_of(profile: Any) -> ProfileSection:
    fn = PROFILE_FUNCTIONS.get(profile.is_a())
    if fn is None:
        raise UnsupportedProfile(f"{profile.is_a()} #{profile.id()} is a profile class modelcheck cannot compute")
    return fn(profile)
