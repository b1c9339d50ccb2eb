"""Colours for charts, all drawn from the Okabe & Ito colour-blind-safe set.

Okabe, M. & Ito, K. (2008), "Color Universal Design": eight colours that stay distinct for
the common forms of colour-vision deficiency. We arrange them our own way:

- a categorical order for unordered categories and for groups of a break-down;
- a diverging scheme for ordered answer scales with a middle (disagree side in vermillion and
  orange, agree side in the two blues, the neutral level in the set's grey), so the two poles
  read as opposites and the middle recedes;
- a sequential scheme (tints of one blue) for ordered levels without a natural middle, such
  as income bands or rank positions.

matplotlib's default colour cycle is never used: every artist gets an explicit colour.
"""

from __future__ import annotations

from matplotlib.colors import to_hex, to_rgb

# The eight Okabe–Ito colours (hex values as published; METHODS §13).
BLACK = "#000000"
ORANGE = "#E69F00"
SKY_BLUE = "#56B4E9"
BLUISH_GREEN = "#009E73"
YELLOW = "#F0E442"
BLUE = "#0072B2"
VERMILLION = "#D55E00"
REDDISH_PURPLE = "#CC79A7"
# The grey that some eight-colour variants use in place of black.
GREY = "#999999"

# Our categorical order: strong, well-separated hues first; yellow late because it is hard to
# read on white; grey last because it is reserved for "neutral" and "other" meanings.
CATEGORICAL = (
    BLUE,
    ORANGE,
    BLUISH_GREEN,
    VERMILLION,
    REDDISH_PURPLE,
    SKY_BLUE,
    YELLOW,
    BLACK,
)

NEUTRAL = GREY
# Text drawn on a bar uses dark or light ink depending on the bar colour.
INK = "#222222"
MUTED_INK = "#555555"
LIGHT_INK = "#FFFFFF"
# One colour for single-series charts (frequency bars, histograms, Borda points).
SINGLE = BLUE
# Thin reference lines (the zero line of a diverging bar).
RULE = "#444444"


def tint(colour: str, amount: float) -> str:
    """Blend ``colour`` towards white by ``amount`` (0 = unchanged, 1 = white)."""
    r, g, b = to_rgb(colour)
    return to_hex((r + (1 - r) * amount, g + (1 - g) * amount, b + (1 - b) * amount)).upper()


def categorical(n: int) -> list[str]:
    """``n`` colours for unordered categories; beyond eight, lighter tints repeat the order."""
    out: list[str] = []
    for i in range(n):
        base = CATEGORICAL[i % len(CATEGORICAL)]
        rounds = i // len(CATEGORICAL)
        out.append(base if rounds == 0 else tint(base, min(0.25 * rounds, 0.75)))
    return out


def sequential(n: int) -> list[str]:
    """``n`` tints of one blue, lightest first, for ordered levels without a middle."""
    if n <= 0:
        return []
    if n == 1:
        return [BLUE]
    # From a pale tint to the full colour: even steps keep neighbouring levels apart.
    lightest = 0.8
    return [tint(BLUE, lightest * (1 - i / (n - 1))) for i in range(n)]


def _side(outer: str, inner: str, k: int) -> list[str]:
    """``k`` colours from ``outer`` (the pole) towards a pale version of ``inner``."""
    if k <= 0:
        return []
    if k == 1:
        return [outer]
    if k == 2:
        return [outer, inner]
    # Beyond two levels per side: the two anchors, then ever paler tints of the inner colour.
    extra = [tint(inner, 0.5 * (j + 1) / (k - 2)) for j in range(k - 2)]
    return [outer, inner, *extra]


def diverging(n: int, neutral_index: int | None = None) -> list[str]:
    """Colours for ``n`` ordered levels from the negative pole to the positive pole.

    With ``neutral_index`` (the middle level of an odd scale) that level is grey; levels before
    it run from vermillion (the pole) to orange, levels after it from sky blue to blue.
    Without a neutral level the scale is split in half.
    """
    if n <= 0:
        return []
    if neutral_index is None:
        left_n = n // 2
        right_n = n - left_n
        if n % 2 == 1:  # an odd scale without a named middle: still colour the middle grey
            left_n, right_n = n // 2, n // 2
    else:
        left_n, right_n = neutral_index, n - neutral_index - 1
    left = _side(VERMILLION, ORANGE, left_n)  # pole first
    right = list(reversed(_side(BLUE, SKY_BLUE, right_n)))  # pole last
    middle = [NEUTRAL] if left_n + right_n < n else []
    return left + middle + right


def _luminance(colour: str) -> float:
    """WCAG 2 relative luminance of a colour."""

    def channel(c: float) -> float:
        return c / 12.92 if c <= 0.03928 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (channel(c) for c in to_rgb(colour))
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def ink_for(colour: str) -> str:
    """Dark or white text, whichever has the higher WCAG 2 contrast ratio on ``colour``."""
    lum = _luminance(colour)
    against_white = 1.05 / (lum + 0.05)
    against_ink = (lum + 0.05) / (_luminance(INK) + 0.05)
    return LIGHT_INK if against_white > against_ink else INK


def for_levels(n: int, *, ordered: bool, diverging_scale: bool, neutral: int | None) -> list[str]:
    """Colours for ``n`` answer levels: diverging for agreement-type scales, sequential for
    other ordered levels, categorical for unordered categories."""
    if diverging_scale:
        return diverging(n, neutral)
    if ordered:
        return sequential(n)
    return categorical(n)


def wave_colours(n: int) -> list[str]:
    """Earlier waves paler, the latest wave in full blue, so the newest reads first."""
    if n <= 1:
        return [BLUE] * max(n, 0)
    return [tint(BLUE, 0.6 * (1 - i / (n - 1))) for i in range(n)]
