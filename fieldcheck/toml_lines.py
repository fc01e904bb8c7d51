"""Line numbers for the keys of a TOML text.

:mod:`tomllib` parses TOML but gives no positions, so error messages about a
key (see :mod:`fieldcheck.antenna`) get their line from this small scanner:
:func:`key_lines` maps every table header and key to its 1-based line and
:func:`find_line` looks one up, falling back to the enclosing table.
"""

from __future__ import annotations

import re

_TOKEN = re.compile(r'''
    (?P<nl>\n) | (?P<ws>[ \t\r]+) | (?P<comment>\#[^\n]*)
  | (?P<str>"""(?:[^\\]|\\.)*?"""|\'\'\'.*?\'\'\'|"(?:[^"\\\n]|\\.)*"|'[^'\n]*')
  | (?P<punct>[\[\]{},=]) | (?P<bare>[^\s\[\]{},="'\#]+)''', re.VERBOSE | re.DOTALL)


def _tokens(text: str) -> list[tuple[str, str, int]]:
    out, line, pos = [], 1, 0
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if m is None:  # stray character: skip it (tomllib has already accepted the text)
            pos += 1
            continue
        kind = m.lastgroup
        if kind not in ("ws", "comment"):
            out.append((kind, m.group(), line))
        line += m.group().count("\n")
        pos = m.end()
    out.append(("nl", "\n", line))
    return out


def key_lines(text: str) -> dict[str, int]:
    """Map each table header and key of a TOML text to its 1-based line.

    tomllib gives no positions, so this small scanner walks the tokens:
    ``[table]`` headers, ``key = value`` lines (dotted and quoted keys) and the
    keys of inline tables.  The first occurrence wins.

    Parameters
    ----------
    text : str
        TOML source, already accepted by tomllib.

    Returns
    -------
    dict
        Dotted key (``'antenna.diameter'``) or table (``'antenna'``) -> line.
    """
    toks, lines, i = _tokens(text), {}, 0

    def key_parts(stop: str) -> tuple[list[str], int]:
        nonlocal i
        parts, ln = [], toks[i][2]
        while toks[i][1] != stop and toks[i][0] != "nl":
            kind, val = toks[i][:2]
            parts += [val[1:-1]] if kind == "str" else [p for p in val.split(".") if p]
            i += 1
        return parts, ln

    def value(path: list[str]) -> None:
        nonlocal i
        if toks[i][1] == "{":
            i += 1
            while toks[i][1] != "}" and i < len(toks) - 1:
                if toks[i][1] == "," or toks[i][0] == "nl":
                    i += 1
                    continue
                keyval(path)
            i += 1
        elif toks[i][1] == "[":
            depth = 0
            while i < len(toks) - 1:
                depth += {"[": 1, "{": 1, "]": -1, "}": -1}.get(toks[i][1], 0) \
                    if toks[i][0] == "punct" else 0
                i += 1
                if depth == 0:
                    break
        else:
            i += 1

    def keyval(prefix: list[str]) -> None:
        nonlocal i
        parts, ln = key_parts("=")
        if toks[i][1] == "=":
            lines.setdefault(".".join(prefix + parts), ln)
            i += 1
            value(prefix + parts)

    table: list[str] = []
    while i < len(toks) - 1:
        if toks[i][0] == "nl":
            i += 1
        elif toks[i][1] == "[":
            i += 1 + (toks[i + 1][1] == "[")
            table, ln = key_parts("]")
            lines.setdefault(".".join(table), ln)
            while toks[i][0] != "nl":
                i += 1
        else:
            keyval(table)
            while toks[i][0] != "nl":
                i += 1
    return lines


def find_line(lines: dict[str, int], key: str) -> int | None:
    """Line of ``key`` or, failing that, of its nearest enclosing table; None if neither."""
    while key:
        if key in lines:
            return lines[key]
        key = key.rpartition(".")[0]
    return None
