"""The project's colours: residues, column classes and query departures, colour-blind-safe by construction.

Every colour here is one of the eight colours of Okabe & Ito 2008 ("Color Universal Design", a published
colour-blind-safe set, :data:`OKABE_ITO`) or a *tint* of one of them: the colour mixed with white by a stated
fraction (:func:`tint`), which keeps its hue and only makes it lighter. Tints are used only where a quiet
background is wanted (unknown residues, gaps, the "no departure" cells and gap-rich columns); the table
:data:`TINTS` lists every tint used and how it was made. The one other colour is white, for heat-map cells
with nothing in them (:data:`ABSENT_COLOUR`).

Residues are coloured by property group, the six classes of ``RESIDUE_GROUPS["mirny-shakhnovich-6"]`` in
:mod:`globcons.core.alphabet` (Mirny & Shakhnovich 1999 J Mol Biol 291:177):

==========  =====================  ===================
group       residues               colour
==========  =====================  ===================
aliphatic   A V L I M C            orange ``#E69F00``
aromatic    F W Y H                reddish purple ``#CC79A7``
polar       S T N Q                bluish green ``#009E73``
positive    K R                    blue ``#0072B2``
negative    D E                    vermillion ``#D55E00``
special     G P                    black ``#000000``
==========  =====================  ===================

Selenocysteine (U) and pyrrolysine (O) take the colour of the residue they stand in for in substitution
scores (C and K, :data:`globcons.core.alphabet.MATRIX_STAND_IN`); unknown (X) is black lightened by 60 %
(``#999999``) and the gap black lightened by 80 % (``#CCCCCC``). Yellow and sky blue are kept for the
column-class and departure colours, where they must stand out from the residue colours.
"""

from __future__ import annotations

from globcons.core.alphabet import CODE_LETTERS, MATRIX_STAND_IN, RESIDUE_GROUPS, STANDARD

__all__ = [
    "OKABE_ITO",
    "tint",
    "TINTS",
    "tinted",
    "RESIDUE_GROUPING",
    "GROUP_COLOURS",
    "RESIDUE_COLOURS",
    "CLASS_COLOURS",
    "DEVIATION_COLOURS",
    "CONTRAST_COLOURS",
    "ABSENT_COLOUR",
    "GAP_RICH_COLOUR",
    "residue_colour",
]

#: The eight colours of Okabe & Ito 2008, by their published names.
OKABE_ITO: dict[str, str] = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}


def tint(colour: str, amount: float) -> str:
    """``colour`` mixed with white: each channel moves ``amount`` of the way to 255 (rounded to nearest).

    Parameters
    ----------
    colour
        ``#RRGGBB``.
    amount
        0 keeps the colour, 1 gives white.

    Returns
    -------
    str
        ``#RRGGBB`` upper case.

    Examples
    --------
    >>> tint("#000000", 0.6)
    '#999999'
    """
    if not 0.0 <= amount <= 1.0:
        raise ValueError(f"tint amount must be within 0-1, got {amount}")
    channels = [int(colour[i:i + 2], 16) for i in (1, 3, 5)]
    mixed = [int(c + amount * (255 - c) + 0.5) for c in channels]  # round half up, not to even
    return "#" + "".join(f"{c:02X}" for c in mixed)


#: Every tint used in this module: name -> (Okabe-Ito colour name, amount of white).
TINTS: dict[str, tuple[str, float]] = {
    "unknown residue": ("black", 0.6),
    "gap": ("black", 0.8),
    "gap-rich class": ("black", 0.6),
    "gap-rich band": ("black", 0.85),
    "no departure": ("sky blue", 0.8),
    "mixed contrast": ("black", 0.6),
    "gap-rich contrast": ("black", 0.8),
    "helix band": ("sky blue", 0.55),
    "helix shade": ("sky blue", 0.88),
    "score line": ("black", 0.55),
}


def tinted(name: str) -> str:
    """The tint listed in :data:`TINTS` under ``name``."""
    base, amount = TINTS[name]
    return tint(OKABE_ITO[base], amount)


#: The residue groups used for colour (a key of :data:`globcons.core.alphabet.RESIDUE_GROUPS`).
RESIDUE_GROUPING = "mirny-shakhnovich-6"

_GROUP_NAMES = ("aliphatic", "aromatic", "polar", "positive", "negative", "special")

#: Group name -> (its letters, its colour); the letters are those of :data:`RESIDUE_GROUPING`, in order.
_GROUP_BASE_COLOURS = ("orange", "reddish purple", "bluish green", "blue", "vermillion", "black")
GROUP_COLOURS: dict[str, tuple[str, str]] = {
    name: (letters, OKABE_ITO[colour])
    for name, letters, colour in zip(_GROUP_NAMES, RESIDUE_GROUPS[RESIDUE_GROUPING], _GROUP_BASE_COLOURS, strict=True)
}


def _residue_colours() -> dict[str, str]:
    colours = {letter: colour for letters, colour in GROUP_COLOURS.values() for letter in letters}
    missing = set(STANDARD) - set(colours)
    if missing:  # the grouping must cover the 20 residues exactly once
        raise RuntimeError(f"residue grouping {RESIDUE_GROUPING} leaves out {''.join(sorted(missing))}")
    for odd, stand_in in MATRIX_STAND_IN.items():
        colours[odd] = colours[stand_in]
    colours["X"] = tinted("unknown residue")
    colours["-"] = tinted("gap")
    return {letter: colours[letter] for letter in CODE_LETTERS}


#: Letter (20 residues, U, O, X and '-') -> ``#RRGGBB``.
RESIDUE_COLOURS: dict[str, str] = _residue_colours()

#: Column class -> colour, for the markers of the conservation profile.
CLASS_COLOURS: dict[str, str] = {
    "invariant": OKABE_ITO["blue"],
    "conservative": OKABE_ITO["bluish green"],
    "variable": OKABE_ITO["orange"],
    "gap-rich": tinted("gap-rich class"),
}

#: Per-residue deviation of a scanned query -> colour, for the departure heat map. The two departures are
#: the strongest colours (vermillion, yellow: far apart in lightness for every kind of colour vision).
DEVIATION_COLOURS: dict[str, str] = {
    "none": tinted("no departure"),
    "leaves-group": OKABE_ITO["yellow"],
    "breaks-invariant": OKABE_ITO["vermillion"],
    "insertion": OKABE_ITO["blue"],
}

#: Contrast class -> colour, for the markers of the group-contrast figure.
CONTRAST_COLOURS: dict[str, str] = {
    "group-specific": OKABE_ITO["vermillion"],
    "shared": OKABE_ITO["blue"],
    "mixed": tinted("mixed contrast"),
    "gap-rich": tinted("gap-rich contrast"),
}

#: Heat-map cells where the query has no residue at the frame position: white, the page itself (nothing there).
ABSENT_COLOUR: str = "#FFFFFF"
#: Background band of a gap-rich column in a logo.
GAP_RICH_COLOUR: str = tinted("gap-rich band")


def residue_colour(letter: str) -> str:
    """Colour of a one-letter code (any case; '.' and '~' are gaps, B, Z, J unknown like X).

    Raises
    ------
    KeyError
        If ``letter`` is not a residue, unknown or gap symbol.

    Examples
    --------
    >>> residue_colour("h")
    '#CC79A7'
    """
    key = letter.upper() if isinstance(letter, str) else letter
    if key in (".", "~"):
        key = "-"
    elif key in ("B", "Z", "J"):
        key = "X"
    if key not in RESIDUE_COLOURS:
        raise KeyError(f"{letter!r} is not a residue letter, X or a gap")
    return RESIDUE_COLOURS[key]
