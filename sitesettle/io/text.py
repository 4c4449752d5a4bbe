"""Untrusted text: identifiers on input, terminal lines and spreadsheet cells on output.

Input (footing, borehole, sounding and stratum names, the ids of pairs and
structure lines) comes from files made by someone else: a spreadsheet export, a
project folder received by mail. Three things can go wrong with such text, and
each has one guard here:

* **Look-alikes.** ``"C\\u200b4"`` (a zero-width space inside) and ``"C4"`` print
  the same but are two footings; a right-to-left override reorders what the
  terminal shows. :func:`identifier` normalises an id to Unicode NFC (so that
  ``"é"`` typed either way is one id) and refuses invisible and control
  characters: categories Cc (controls: line breaks, ANSI escapes), Cf (format:
  zero-width spaces, bidi overrides and isolates), Cs, Co, Cn (surrogates,
  private use, unassigned), Zl and Zp (line and paragraph separators) and any
  space but the plain one (U+0020).
* **Spreadsheet formulas.** A cell that begins with ``=``, ``+``, ``-``, ``@``, a
  tab or a carriage return is run as a formula by spreadsheet programs
  (``=HYPERLINK(…)``, ``+cmd|…``). Ids beginning with one of them are refused on
  input (:func:`identifier`); every other text cell written to a CSV file gets a
  leading single quote (:func:`spreadsheet_text`), the convention spreadsheets
  read as "this is text" (OWASP, "CSV Injection", common practice). Numbers are
  never changed: ``-3.2`` in a numeric column stays a number.
* **Terminal spoofing.** A project name with a line break can print a fake
  verdict line; ANSI escapes can recolour or hide the real one.
  :func:`terminal_line` writes every control, format and separator character as
  an escape (``\\n``, ``\\x1b``, ``\\u202e``), so each printed line is one line of
  plain text.
"""

from __future__ import annotations

import unicodedata

from sitesettle.errors import InputError

#: longest id accepted [characters]: a footing schedule's ids are a few characters
#: ("C4", "F12a", "CORE-RAFT-2"); 100 leaves room for any naming scheme while the
#: tables, figures and report stay readable
MAX_ID_LENGTH = 100
#: longest project name and free-text entry [characters] (a title, not a document)
MAX_TEXT_LENGTH = 1000
#: characters that make a spreadsheet read a cell as a formula (OWASP, "CSV Injection")
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
#: Unicode categories never accepted in an id (see the module notes)
FORBIDDEN_CATEGORIES = frozenset({"Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"})
#: categories escaped in terminal lines: the forbidden ones, and spaces other than U+0020
_ESCAPED = FORBIDDEN_CATEGORIES | {"Zs"}


def _show(ch: str) -> str:
    """A character as an escape: ``\\n``, ``\\x1b``, ``\\u202e``."""
    code = ord(ch)
    if ch == "\n":
        return "\\n"
    if ch == "\r":
        return "\\r"
    if ch == "\t":
        return "\\t"
    if code < 0x100:
        return f"\\x{code:02x}"
    if code < 0x10000:
        return f"\\u{code:04x}"
    return f"\\U{code:08x}"


def _bad_char(text: str) -> tuple[int, str] | None:
    for i, ch in enumerate(text):
        cat = unicodedata.category(ch)
        if cat in FORBIDDEN_CATEGORIES or (cat == "Zs" and ch != " "):
            return i, ch
    return None


def identifier(value: str, where: str, what: str = "id") -> str:
    """An id from a file, NFC-normalised and checked (see the module notes).

    Parameters
    ----------
    value : str
        The text as read (already stripped of surrounding spaces).
    where : str
        The place, for the message (``'footings.csv row 4, column "id"'``).
    what : str
        What the text names (``"footing id"``), for the message.

    Returns
    -------
    str
        The id in Unicode normal form C.

    Raises
    ------
    InputError
        For an empty id, one longer than :data:`MAX_ID_LENGTH`, one holding an
        invisible or control character, or one beginning with a formula character.

    Examples
    --------
    >>> identifier("Cafe\\u0301", "x") == "Caf\\u00e9"
    True
    >>> try:
    ...     identifier("C\\u200b4", "f.csv row 2")
    ... except InputError as exc:
    ...     print(exc.problem[exc.problem.index("U+"):])
    U+200B (ZERO WIDTH SPACE) at position 2
    """
    text = unicodedata.normalize("NFC", str(value))
    if not text:
        raise InputError(where, f"the {what} is empty", "a name or an id")
    bad = _bad_char(text)
    if bad is not None:
        i, ch = bad
        name = unicodedata.name(ch, "a control character")
        raise InputError(
            where,
            f'the {what} "{terminal_line(text)}" holds the invisible or control character '
            f"U+{ord(ch):04X} ({name}) at position {i + 1}",
            "an id of visible characters (letters, digits, spaces, punctuation)",
        )
    if text.startswith(FORMULA_START):
        raise InputError(
            where,
            f'the {what} "{terminal_line(text)}" begins with "{terminal_line(text[0])}", '
            "which a spreadsheet reads as the start of a formula",
            "an id beginning with a letter, a digit or another character than = + - @",
        )
    if len(text) > MAX_ID_LENGTH:
        raise InputError(
            where,
            f"the {what} has {len(text)} characters",
            f"at most {MAX_ID_LENGTH} characters",
        )
    return text


def free_text(value: str, where: str, *, lines: bool = False) -> str:
    """Free text (project name, client, notes): NFC, at most :data:`MAX_TEXT_LENGTH` characters.

    The characters refused in ids (controls, format and bidi characters,
    separators) are refused here too, except line breaks and tabs when ``lines``
    (notes may run over several lines); a formula character at the start is
    allowed (it is neutralised where a spreadsheet could read it).
    """
    text = unicodedata.normalize("NFC", str(value))
    if len(text) > MAX_TEXT_LENGTH:
        raise InputError(
            where, f"the text has {len(text)} characters", f"at most {MAX_TEXT_LENGTH} characters"
        )
    bad = _bad_char(text.replace("\n", " ").replace("\t", " ") if lines else text)
    if bad is not None:
        i, ch = bad
        raise InputError(
            where,
            f'the text "{terminal_line(text[:60])}" holds the invisible or control character '
            f"U+{ord(ch):04X} ({unicodedata.name(ch, 'a control character')}) at position {i + 1}",
            "visible characters" + (" and line breaks" if lines else " on one line"),
        )
    return text


def terminal_line(text: str) -> str:
    """``text`` with every control, format, separator and unusual space character escaped.

    The result prints as exactly one line of visible text: no line break, no
    ANSI escape, no bidi reordering, no invisible character.

    Examples
    --------
    >>> terminal_line("A\\nPASS \\x1b[32m\\u202eok")
    'A\\\\nPASS \\\\x1b[32m\\\\u202eok'
    """
    out = []
    for ch in str(text):
        if unicodedata.category(ch) in _ESCAPED and ch != " ":
            out.append(_show(ch))
        else:
            out.append(ch)
    return "".join(out)


def terminal_text(text: str) -> str:
    """Several lines for the terminal: each line of ``text`` through :func:`terminal_line`.

    Only ``\\n`` separates the lines; any other break character is escaped.
    """
    return "\n".join(terminal_line(line) for line in str(text).split("\n"))


def spreadsheet_text(value):
    """A text cell made safe for a spreadsheet: a leading ``'`` before a formula character.

    Anything that is not a ``str`` (numbers, booleans, None) is returned as is.

    Examples
    --------
    >>> spreadsheet_text("=HYPERLINK(1)")
    "'=HYPERLINK(1)"
    >>> spreadsheet_text("total 85 mm > 50 mm")
    'total 85 mm > 50 mm'
    >>> spreadsheet_text(-3.2)
    -3.2
    """
    if isinstance(value, str) and value.startswith(FORMULA_START):
        return "'" + value
    return value
