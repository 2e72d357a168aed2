"""Number and formula formatting for the report builder (formatting only, no statistics)."""

from __future__ import annotations

import math as _math
import re
from collections.abc import Iterable, Sequence

from nestfit._text import format_number, format_p
from nestfit.report._document import Math

__all__ = ["decimals_for", "fixed", "math", "num", "pval", "tex_number", "weight_text"]


def num(x: float | int | None, digits: int = 6) -> str:
    """A number to ``digits`` significant digits (the library's own format)."""
    return format_number(x, digits)


def pval(p: float) -> str:
    """A p-value as the library prints it (``< 0.0001`` below that)."""
    return format_p(p)


def decimals_for(values: Iterable[float], digits: int = 7) -> int:
    """Decimals that give the largest of ``values`` about ``digits`` significant digits."""
    finite = [abs(v) for v in values if _math.isfinite(v) and v != 0]
    if not finite:
        return 4
    lead = _math.floor(_math.log10(max(finite))) + 1
    return int(min(max(digits - lead, 0), 10))


def fixed(x: float, decimals: int) -> str:
    """``x`` with a fixed number of decimals (sums of squares in one formula line up)."""
    if not _math.isfinite(x):
        return "inf" if x > 0 else "-inf" if x < 0 else "-"
    return f"{x:.{decimals}f}"


_EXP = re.compile(r"^(-?[0-9.]+)e([+-])0*([0-9]+)$")


def tex_number(text: str) -> str:
    """A number as printed, written for LaTeX math (``1.5e-05`` -> ``1.5\\times 10^{-5}``)."""
    text = text.strip()
    if text in ("inf", "-inf"):
        return r"\infty" if text == "inf" else r"-\infty"
    if text == "-":
        return r"\text{--}"
    if text.startswith("< "):
        return "< " + tex_number(text[2:])
    m = _EXP.match(text)
    if m:
        sign = "-" if m.group(2) == "-" else ""
        return rf"{m.group(1)}\times 10^{{{sign}{m.group(3)}}}"
    return text


def math(*pieces: str | tuple[str, str]) -> Math:
    """A formula fragment from pieces: a ``str`` is a number or symbol written the same in
    both forms (numbers converted by :func:`tex_number`); a pair is ``(plain, tex)``."""
    plain, tex = [], []
    for piece in pieces:
        if isinstance(piece, tuple):
            plain.append(piece[0])
            tex.append(piece[1])
        else:
            plain.append(piece)
            tex.append(tex_number(piece) if _looks_numeric(piece) else piece)
    return Math("".join(plain), "".join(tex))


def _looks_numeric(text: str) -> bool:
    t = text.strip()
    return bool(t) and (t in ("inf", "-inf", "-") or t.startswith("< ")
                        or bool(re.fullmatch(r"-?[0-9.]+(e[+-][0-9]+)?", t)))


def weight_text(weights: Sequence[tuple[str, float]]) -> str:
    """Non-zero weights on the level means as ``"+1 H4, -0.2 H1, ..."`` (plain text)."""
    return ", ".join(f"{num(w, 4)} {level}" if w < 0 else f"+{num(w, 4)} {level}"
                     for level, w in weights)
