"""Parsing and formatting single-residue substitutions in the notations the trade uses.

Accepted forms (beta's sickle-cell change as the example):

=================  =================  ======================================================
text               style              meaning
=================  =================  ======================================================
``E6V``            ``"one-letter"``   wild residue, position, new residue
``Glu6Val``        ``"three-letter"`` the same in three-letter codes (any case: ``GLU6VAL``)
``p.Glu7Val``      ``"three-letter"`` HGVS protein name (``hgvs`` true), counted from the Met
``p.E7V``          ``"one-letter"``   HGVS with one-letter codes
``p.(Glu7Val)``    ``"three-letter"`` HGVS predicted consequence (``predicted`` true)
``A3:V``           ``"label"``        frame label, colon, new residue
``A3:Val``         ``"label"``        the same with a three-letter new residue
=================  =================  ======================================================

The position is kept as written: this module does not convert between numberings (``p.`` names count
from the initiator Met, plain names count the target as given); the caller knows the target and does.
The label form needs its colon: ``A3V`` is wild Ala, position 3, new Val.

Decisions
---------
* Only substitutions of one standard residue by another are read. Deletions, insertions,
  duplications, frameshifts, extensions, ranges and stops (``*``, ``Ter``, ``X``) are refused with a
  message saying so, as are the ambiguity codes (B, Z, J, X) and U/O, which the property tables and
  substitution matrices do not cover.
* A synonymous name (``E6E``) is accepted; :attr:`Mutation.is_synonymous` tells the caller, who can
  report it. HGVS's ``=`` shorthand is refused with a hint to write the residue out.
* One- and three-letter codes are not mixed within a name (``E6Val`` is refused).
* Three-letter codes come from Biopython's IUPAC tables (:data:`globcons.core.alphabet.THREE_LETTER`),
  restricted to the 20 standard residues.

>>> m = parse_mutation("p.(Glu7Val)")
>>> (m.wild, m.position, m.new, m.hgvs, m.style)
('E', 7, 'V', True, 'three-letter')
>>> format_mutation(m, "one-letter")
'p.(E7V)'
"""

from __future__ import annotations

import operator
import os
import re
from dataclasses import dataclass

from globcons.core.alphabet import ONE_LETTER, STANDARD, THREE_LETTER
from globcons.core.labels import SEGMENT_PATTERN, is_label
from globcons.errors import InputError, OptionError
from globcons.io.opening import read_text

__all__ = [
    "STYLES",
    "Mutation",
    "parse_mutation",
    "format_mutation",
    "parse_mutation_list",
    "read_mutation_file",
]

#: Accepted values of :attr:`Mutation.style` and of ``format_mutation``'s ``style``.
STYLES: tuple[str, ...] = ("one-letter", "three-letter", "label")

# Only the 20 standard residues: the property tables and substitution matrices do not cover U and O.
_ONE_TO_THREE: dict[str, str] = {k: v for k, v in THREE_LETTER.items() if k in STANDARD}
_THREE_TO_ONE: dict[str, str] = {k: v for k, v in ONE_LETTER.items() if v in STANDARD}

_VALID_ONE = f"a one-letter code from {STANDARD}"
_VALID_THREE = "a three-letter code (" + ", ".join(_ONE_TO_THREE[k] for k in STANDARD) + ")"
_SUBSTITUTION_ONLY = ("only single substitutions of one standard residue by another are supported "
                      "(e.g. E6V, Glu6Val, A3:V)")

# Words and marks of HGVS changes that are not substitutions. None of them occurs in a valid
# substitution: no three-letter code contains these letter runs.
_NOT_SUBSTITUTION = re.compile(r"delins|del|ins|dup|inv|fs|ext|con|_|\*|ter|\?|\[|;|>", re.IGNORECASE)
_STOP = re.compile(r"\*|ter$", re.IGNORECASE)
_PREFIX = re.compile(r"^([a-zA-Z])\.")
# HGVS reference-sequence types other than protein: coding DNA, genomic, mitochondrial, non-coding
# RNA transcript, circular genomic, RNA.
_NUCLEIC_PREFIXES = "cgmnor"
_POSITIONAL = re.compile(r"^([A-Za-z]+)([0-9]+)([A-Za-z]+)$")
_LABEL_THEN_RESIDUE = re.compile(rf"^({SEGMENT_PATTERN})([1-9][0-9]*)([A-Za-z]{{1}}|[A-Za-z]{{3}})$")


@dataclass(frozen=True)
class Mutation:
    """One substitution, as parsed.

    Attributes
    ----------
    wild
        One-letter code of the wild-type residue; None for the label form.
    position
        Position as written (1-based, numbering as the notation implies); None for the label form.
    new
        One-letter code of the new residue.
    label
        Frame label (e.g. ``"A3"``) for the label form; None otherwise. A caller that places a
        label-form mutation on a chain may fill ``wild`` and ``position`` too (and vice versa).
    hgvs
        Whether the name was written as an HGVS protein name (``p.``).
    text
        The text as given (outer whitespace removed); for a mutation built in code without it, the
        canonical name in its style.
    style
        ``"one-letter"``, ``"three-letter"`` or ``"label"``: how the name was written.
    three_letter
        Whether the residues were written in three-letter codes (always for ``"three-letter"``,
        never for ``"one-letter"``, either for ``"label"``).
    predicted
        Whether an HGVS name was written in parentheses (a predicted consequence).
    """

    wild: str | None
    position: int | None
    new: str
    label: str | None = None
    hgvs: bool = False
    text: str = ""
    style: str = "one-letter"
    three_letter: bool = False
    predicted: bool = False

    def __post_init__(self) -> None:
        # Guard objects built in code as strictly as parsed ones, so every Mutation can be formatted.
        if self.style not in STYLES:
            raise OptionError(f"style {self.style!r} is not one of {', '.join(STYLES)}")
        if self.new not in _ONE_TO_THREE:
            raise OptionError(f"new residue {self.new!r} is not {_VALID_ONE}")
        if self.wild is not None and self.wild not in _ONE_TO_THREE:
            raise OptionError(f"wild-type residue {self.wild!r} is not {_VALID_ONE}")
        if (self.wild is None) != (self.position is None):
            raise OptionError("a mutation needs both a wild-type residue and a position, or neither")
        if self.position is not None:
            # Accept numpy integers and the like, but store a plain int so equality and hashing agree.
            try:
                position = operator.index(self.position)
            except TypeError:
                position = None
            if position is None or isinstance(self.position, bool) or position < 1:
                raise OptionError(f"position {self.position!r} is not a whole number from 1")
            object.__setattr__(self, "position", position)
        if self.label is not None and not is_label(self.label):
            raise OptionError(f"{self.label!r} is not a frame label (e.g. A3, F8, FG3, NA1)")
        if self.position is None and self.label is None:
            raise OptionError("a mutation needs a position or a frame label")
        if self.style == "label" and self.label is None:
            raise OptionError("a label-style mutation needs a frame label")
        if self.style != "label" and self.position is None:
            raise OptionError(f"a {self.style} mutation needs a wild-type residue and a position")
        if self.style == "label" and self.hgvs:
            raise OptionError("a label-style mutation cannot be an HGVS (p.) name")
        if self.predicted and not self.hgvs:
            raise OptionError("only an HGVS (p.) name can be marked predicted")
        if self.style != "label" and self.three_letter != (self.style == "three-letter"):
            raise OptionError(f"three_letter={self.three_letter} contradicts style {self.style!r}")
        if not self.text:
            # Built in code: give it its canonical name, so messages quoting ``text`` read well.
            object.__setattr__(self, "text", format_mutation(self))

    @property
    def is_synonymous(self) -> bool:
        """Whether the new residue is the wild type (False when the wild type is not known)."""
        return self.wild is not None and self.wild == self.new

    def __str__(self) -> str:
        return format_mutation(self)


# ---------------------------------------------------------------------------------------------
# Parsing


def _fail(text: str, reason: str) -> OptionError:
    return OptionError(f"mutation {text!r}: {reason}")


def _residue(token: str, text: str, role: str) -> tuple[str, bool]:
    """One-letter code of a one- or three-letter residue token, and whether it was three-letter."""
    if len(token) == 1:
        letter = token.upper()
        if letter in _ONE_TO_THREE:
            return letter, False
        if letter == "X":
            raise _fail(text, f"{role} residue 'X' (unknown or stop) is not supported; {_SUBSTITUTION_ONLY}")
        raise _fail(text, f"{role} residue {token!r} is not one of the 20 standard residues; "
                          f"use {_VALID_ONE}")
    if len(token) == 3:
        letter = _THREE_TO_ONE.get(token.upper())
        if letter is not None:
            return letter, True
        raise _fail(text, f"{role} residue {token!r} is not a standard three-letter code; use {_VALID_THREE}")
    raise _fail(text, f"{role} residue {token!r} is neither {_VALID_ONE} nor {_VALID_THREE}")


def _parse_label_form(text: str, body: str) -> Mutation:
    label, _, new_token = body.partition(":")
    if ":" in new_token:
        raise _fail(text, "more than one ':'; the label form is LABEL:RESIDUE, e.g. A3:V")
    if not label or not new_token:
        raise _fail(text, "the label form needs a frame label and a new residue either side of ':', "
                          "e.g. A3:V or F8:His")
    if not is_label(label):
        hint = ""
        if is_label(label.upper()):
            hint = f" (frame labels are written in capitals: {label.upper()})"
        elif _POSITIONAL.match(label) or label[:1].isdigit():
            hint = " (the label form takes no wild-type residue: write e.g. A3:V)"
        raise _fail(text, f"{label!r} is not a frame label{hint}; a label is a segment "
                          "(NA, A, AB, B, C, CD, CE, D, E, EF, F, FG, G, GH, H, HC) then a place from 1, "
                          "e.g. A3, F8, FG3")
    new, three = _residue(new_token, text, "new")
    return Mutation(wild=None, position=None, new=new, label=label, hgvs=False, text=text,
                    style="label", three_letter=three)


def _label_hint(body: str) -> str:
    """A pointer to the label form for text that reads as a frame label without its colon."""
    guess = _LABEL_THEN_RESIDUE.match(body)
    if guess is not None:
        label, residue = guess.group(1) + guess.group(2), guess.group(3)
        return f"; for frame label {label} write {label}:{residue} (the label form needs its colon)"
    if is_label(body):
        return f"; for frame label {body} add a colon and the new residue, e.g. {body}:V"
    return ""


def _parse_positional(text: str, body: str, hgvs: bool, predicted: bool) -> Mutation:
    match = _POSITIONAL.match(body)
    if match is None:
        hint = _label_hint(body) if not hgvs else ""
        if "," in body:
            hint = "; this takes one mutation, not a list"
        elif body[:1].isdigit():
            hint = "; the wild-type residue comes first, e.g. E6V"
        raise _fail(text, "expected a wild-type residue, a position and a new residue (e.g. E6V, "
                          f"Glu6Val, p.Glu7Val) or a frame label form (e.g. A3:V){hint}")
    wild_token, digits, new_token = match.groups()
    if int(digits) == 0:
        raise _fail(text, "position 0 does not exist; positions count from 1")
    if digits.startswith("0"):
        raise _fail(text, f"position {digits!r} has a leading zero; write {int(digits)}")
    if len(wild_token) not in (1, 3) or len(new_token) not in (1, 3):
        raise _fail(text, f"residues are {_VALID_ONE} or {_VALID_THREE}; "
                          f"got {wild_token!r} and {new_token!r}{_label_hint(body) if not hgvs else ''}")
    if len(wild_token) != len(new_token):
        raise _fail(text, "one-letter and three-letter codes are mixed; write e.g. E6V or Glu6Val")
    wild, three = _residue(wild_token, text, "wild-type")
    new, _ = _residue(new_token, text, "new")
    return Mutation(wild=wild, position=int(digits), new=new, label=None, hgvs=hgvs, text=text,
                    style="three-letter" if three else "one-letter", three_letter=three,
                    predicted=predicted)


def parse_mutation(text: str) -> Mutation:
    """Read one substitution in any accepted notation (see the module's table).

    Parameters
    ----------
    text
        E.g. ``"E6V"``, ``"Glu6Val"``, ``"p.Glu7Val"``, ``"p.(Glu7Val)"``, ``"A3:V"``. Outer
        whitespace is ignored; three-letter codes and one-letter codes may be in any case; frame
        labels are in capitals.

    Returns
    -------
    Mutation
        With residues as upper-case one-letter codes and the position as written.

    Raises
    ------
    OptionError
        If the text is not a single substitution of standard residues; the message names the text
        and says what is accepted.

    Examples
    --------
    >>> m = parse_mutation("GLU6VAL")
    >>> (m.wild, m.position, m.new, m.style)
    ('E', 6, 'V', 'three-letter')
    >>> m = parse_mutation("F8:His")
    >>> (m.label, m.new, m.style)
    ('F8', 'H', 'label')
    """
    if not isinstance(text, str):
        raise OptionError(f"mutation {text!r} is not text")
    text = text.strip()
    if not text:
        raise OptionError("empty mutation; expected e.g. E6V, Glu6Val, p.Glu7Val or A3:V")
    if any(ch.isspace() for ch in text):
        raise _fail(text, "contains a space; write the name without spaces, e.g. E6V or A3:V")

    body = text
    hgvs = predicted = False
    prefix = _PREFIX.match(body)
    if prefix is not None and prefix.group(1).lower() in _NUCLEIC_PREFIXES:
        raise _fail(text, f"'{prefix.group(1)}.' names a change in a nucleic-acid sequence; "
                          "only protein names (p.) are read, e.g. p.Glu7Val")
    if prefix is not None and prefix.group(1).lower() == "p":
        hgvs = True
        body = body[2:]
        if body.startswith("(") or body.endswith(")"):
            if not (body.startswith("(") and body.endswith(")")):
                raise _fail(text, "unbalanced parentheses; a predicted HGVS name is written p.(Glu7Val)")
            predicted = True
            body = body[1:-1]
    elif "(" in body or ")" in body:
        raise _fail(text, "parentheses belong to a predicted HGVS name only, e.g. p.(Glu7Val)")
    if not body:
        raise _fail(text, "nothing after the prefix; expected e.g. p.Glu7Val")

    if _STOP.search(body):
        raise _fail(text, f"stop changes ('*', Ter) are not supported; {_SUBSTITUTION_ONLY}")
    if _NOT_SUBSTITUTION.search(body):
        raise _fail(text, f"not a substitution: {_SUBSTITUTION_ONLY}; deletions, insertions, "
                          "duplications, frameshifts, extensions, ranges and stops are not")
    if body.endswith("="):
        raise _fail(text, "'=' (no change) is not read; to check a synonymous name write the residue "
                          "out, e.g. E6E")
    if ":" in body:
        if hgvs:
            raise _fail(text, "an HGVS (p.) name counts residues; the frame label form takes no prefix, "
                              "e.g. A3:V")
        return _parse_label_form(text, body)
    return _parse_positional(text, body, hgvs, predicted)


# ---------------------------------------------------------------------------------------------
# Formatting


def format_mutation(m: Mutation, style: str | None = None, *, hgvs: bool | None = None,
                    three_letter: bool | None = None, predicted: bool | None = None) -> str:
    """Write a mutation in one of the notations.

    Parameters
    ----------
    m
        The mutation.
    style
        ``"one-letter"``, ``"three-letter"`` or ``"label"``; default: the style it was written in.
    hgvs
        Whether to write the ``p.`` prefix (not for ``"label"``); default: as ``m`` was written, and
        never for a label-form ``m`` turned into a positional style.
    three_letter
        For ``"label"`` only: whether the new residue gets its three-letter code; default: as ``m``.
    predicted
        For HGVS names: whether to wrap the change in parentheses; default: as ``m``.

    Returns
    -------
    str
        Canonical text (one-letter codes upper case, three-letter codes capitalised), which
        :func:`parse_mutation` reads back to the same residues, position and label.

    Raises
    ------
    OptionError
        If the style is unknown, or needs what ``m`` lacks (a label-form mutation has no position,
        a positional one no label, unless a caller filled them in).

    Examples
    --------
    >>> m = parse_mutation("glu6val")
    >>> format_mutation(m), format_mutation(m, "one-letter"), format_mutation(m, hgvs=True)
    ('Glu6Val', 'E6V', 'p.Glu6Val')
    """
    style = m.style if style is None else style
    if style not in STYLES:
        raise OptionError(f"style {style!r} is not one of {', '.join(STYLES)}")

    if style == "label":
        if hgvs:
            raise OptionError("the frame label form cannot be an HGVS (p.) name")
        if m.label is None:
            raise OptionError(f"{format_mutation(m)} has no frame label; place it on a chain first")
        three = m.three_letter if three_letter is None else three_letter
        return f"{m.label}:{_ONE_TO_THREE[m.new] if three else m.new}"

    if m.wild is None or m.position is None:
        raise OptionError(f"{m.label}:{m.new} has a frame label but no position; "
                          "place it on a chain to write it as a residue number")
    if hgvs is None:
        hgvs = m.hgvs
    if predicted is None:
        predicted = m.predicted and hgvs
    if predicted and not hgvs:
        raise OptionError("only an HGVS (p.) name can be written as predicted")
    if style == "three-letter":
        change = f"{_ONE_TO_THREE[m.wild]}{m.position}{_ONE_TO_THREE[m.new]}"
    else:
        change = f"{m.wild}{m.position}{m.new}"
    if predicted:
        change = f"({change})"
    return f"p.{change}" if hgvs else change


# ---------------------------------------------------------------------------------------------
# Lists and files


def parse_mutation_list(text: str) -> list[Mutation]:
    """Read a comma-separated list of mutations (e.g. the value of ``--mutations``).

    Parameters
    ----------
    text
        E.g. ``"E6V, p.Glu7Val,A3:V"``; whitespace around items is ignored.

    Returns
    -------
    list of Mutation
        In the order given (duplicates kept; the caller decides what they mean).

    Raises
    ------
    OptionError
        If the list is empty, an item is empty (the message gives its 1-based number), or an item
        is not a valid mutation (the message gives its number and the reason).

    Examples
    --------
    >>> [str(m) for m in parse_mutation_list("E6V, Lys17Gln")]
    ['E6V', 'Lys17Gln']
    """
    if not isinstance(text, str) or not text.strip():
        raise OptionError("empty mutation list; give comma-separated mutations, e.g. E6V,H92Y")
    items = text.split(",")
    mutations = []
    for number, item in enumerate(items, 1):
        if not item.strip():
            raise OptionError(f"item {number} of the mutation list {text.strip()!r} is empty "
                              "(two commas in a row, or a comma at an end?)")
        try:
            mutations.append(parse_mutation(item))
        except OptionError as error:
            raise OptionError(f"item {number} of the mutation list: {error.message}") from None
    return mutations


def read_mutation_file(path: str | os.PathLike[str]) -> list[Mutation]:
    """Read mutations one per line from a text file (e.g. ``--mutations-file``).

    Blank lines are skipped, and ``#`` starts a comment to the end of its line (a whole line or
    after a mutation).

    Parameters
    ----------
    path
        The file, UTF-8 text.

    Returns
    -------
    list of Mutation
        In file order.

    Raises
    ------
    InputError
        If the file cannot be read, holds no mutation, or a line is not one valid mutation; the
        error carries the file name and the 1-based line number.
    """
    source = os.fspath(path)
    lines = read_text(path, "mutation file").splitlines()
    mutations = []
    for number, raw in enumerate(lines, 1):
        item = raw.split("#", 1)[0].strip()
        if not item:
            continue
        if "," in item:
            raise InputError(f"{item!r} holds a comma; the file takes one mutation per line", source, number)
        try:
            mutations.append(parse_mutation(item))
        except OptionError as error:
            raise InputError(error.message, source, number) from None
    if not mutations:
        raise InputError("no mutations in the file (only blank lines and # comments)", source)
    return mutations
