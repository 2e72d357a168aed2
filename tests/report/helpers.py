"""Reading the rendered documents back: Markdown tables by caption, LaTeX sections."""

from __future__ import annotations

import re


def markdown_table(text: str, caption_start: str) -> list[list[str]]:
    """The body rows of the Markdown table whose caption starts with ``caption_start``."""
    lines = text.splitlines()
    for i, line in enumerate(lines):
        if re.match(r"\*\*Table \d+\.\*\* ", line) and line.split("** ", 1)[1].startswith(
                caption_start):
            rows = []
            for row in lines[i + 4:]:
                if not row.startswith("|"):
                    break
                rows.append([c.strip() for c in re.split(r"(?<!\\)\|", row)[1:-1]])
            return rows
    raise AssertionError(f"no table captioned {caption_start!r}")


def headings(text: str) -> list[str]:
    """Markdown headings, with their level marks."""
    return [line for line in text.splitlines() if line.startswith("#")]


def close_to_printed(value: float, printed: str, digits: int = 6) -> bool:
    """``printed`` is ``value`` to the printed precision (last printed digit, half a unit)."""
    printed = printed.strip()
    if printed.startswith("<"):
        return value < float(printed.lstrip("< "))
    mantissa = printed.split("e")[0]
    decimals = len(mantissa.split(".")[1]) if "." in mantissa else 0
    exponent = int(printed.split("e")[1]) if "e" in printed else 0
    half = 0.5 * 10.0 ** (exponent - decimals)
    return abs(value - float(printed)) <= half * (1 + 1e-9)
