"""The attic's shape, derived from a scenario: its height, and how its two air layers share the volume, the
roof deck, the framing and the horizontal section between them.

Two shapes, both with equally pitched roof planes over a rectangular floor W x L (W the span across the
slopes, L >= W the length):

- **gable** (one or two sloped planes: a triangular section along the whole length): the horizontal section
  at height z is W (1 - z/H) by L;
- **hip** (planes sloping on all four sides): the section at height z is W (1 - z/H) by L - W z/H (a square
  pyramid when L = W).

With s = z/H and r = W/L (0 for a gable), the section's share of the floor is a(s) = (1 - s)(1 - r s); the
volume above s is L W H times the integral of a from s to 1; the sloped roof above s projects onto the
section at s, so its share of the roof area is a(s) too (equal pitch: area = plan area / cos(pitch)). For a
gable the layer above mid-height holds a quarter of the volume and half of the deck. The framing (trusses
filling the section) is shared like the volume. (Solid geometry, worked here; the gable shares match the
triangle's similar-triangle ratios.)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

#: Shapes of the roof section.
SHAPES = ("gable", "hip")


@dataclass(frozen=True)
class AtticGeometry:
    """How the attic divides between its air layers (all SI).

    shape : "gable" or "hip"; inferred : True when the shape was inferred from the planes
    height : ridge height above the attic floor [m]; span : W [m]; length : L [m]
    interface_height : height of the layer interface above the floor [m]
    upper_volume_share, upper_deck_share, upper_framing_share : the upper layer's shares [-]
    interface_area : the horizontal section between the layers [m2]
    cross_section : the attic's mean vertical section across its length (volume / length) [m2]
    """

    shape: str
    inferred: bool
    height: float
    span: float
    length: float
    interface_height: float
    upper_volume_share: float
    upper_deck_share: float
    upper_framing_share: float
    interface_area: float
    cross_section: float


def section_share(s: float, r: float) -> float:
    """Share of the floor area of the horizontal section at relative height s (0..1), r = W / L."""
    return (1.0 - s) * (1.0 - r * s)


def volume_share_above(s: float, r: float) -> float:
    """Share of the attic's volume above relative height s: the integral of the section from s to 1 over
    the integral from 0 to 1 (integral of (1 - z)(1 - r z) = (1 - z) - (1 + r)(1 - z^2)/2 + r (1 - z^3)/3)."""
    def above(x):
        return (1.0 - x) - (1.0 + r) * (1.0 - x * x) / 2.0 + r * (1.0 - x ** 3) / 3.0

    return above(s) / above(0.0)


def _height_from_volume(shape, floor_area, volume, tan_pitch):
    """Ridge height [m] that gives the volume: gable V = A H / 2; hip V = A H (1/2 - r/6) with
    r = W / L, W = 2 H / tan(pitch), L = A / W (bisection; r capped at 1, a square pyramid)."""
    if shape == "gable":
        return 2.0 * volume / floor_area

    def vol(h):
        w = 2.0 * h / tan_pitch
        r = min(w * w / floor_area, 1.0)
        return floor_area * h * (0.5 - r / 6.0)

    lo, hi = 0.0, 6.0 * volume / floor_area + 1.0
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if vol(mid) < volume else (lo, mid)
    return 0.5 * (lo + hi)


def attic_geometry(scenario) -> AtticGeometry:
    """The attic's geometry from a validated scenario: the shape (``roof.shape``, else inferred: one or two
    planes make a gable, more a hip), the ridge height (``attic.ridge_height``, else the height that gives
    ``attic.volume``), the layer interface at mid-height (or at the height that leaves
    ``attic.upper_volume_fraction`` of the volume above it, when that override is given) and the shares."""
    roof, attic = scenario.roof, scenario.attic
    shape = roof.shape or ("gable" if len(roof.planes) <= 2 else "hip")
    tan_pitch = math.tan(math.radians(sum(p.tilt for p in roof.planes) / len(roof.planes)))
    height = attic.ridge_height or _height_from_volume(shape, attic.floor_area, attic.volume, max(tan_pitch, 1e-3))
    span = min(2.0 * height / max(tan_pitch, 1e-3), math.sqrt(attic.floor_area)) if shape == "hip" else (
        2.0 * height / max(tan_pitch, 1e-3) if len(roof.planes) == 2 else height / max(tan_pitch, 1e-3))
    length = attic.floor_area / span
    r = span / length if shape == "hip" else 0.0
    s = 0.5
    if attic.upper_volume_fraction is not None:
        lo, hi = 0.0, 1.0  # the volume above s falls from 1 to 0 as s rises
        for _ in range(100):
            mid = 0.5 * (lo + hi)
            lo, hi = (mid, hi) if volume_share_above(mid, r) > attic.upper_volume_fraction else (lo, mid)
        s = 0.5 * (lo + hi)
    share_v = volume_share_above(s, r)
    return AtticGeometry(
        shape=shape, inferred=roof.shape is None, height=height, span=span, length=length,
        interface_height=s * height, upper_volume_share=share_v, upper_deck_share=section_share(s, r),
        upper_framing_share=share_v, interface_area=section_share(s, r) * attic.floor_area,
        cross_section=attic.volume / length)
