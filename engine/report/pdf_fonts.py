"""Fonts for the PDF summary: a Unicode TrueType font when one is found, else the PDF core
fonts with the text spelt out in Latin-1."""
from __future__ import annotations

import os
import unicodedata
from pathlib import Path

#: Unicode TrueType fonts tried in order (regular, bold). ``PERCH_REPORT_FONT`` may name a
#: regular TTF to try first (its bold is looked for beside it as ``<name>-Bold.ttf``).
FONT_CANDIDATES = (
    ("/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf",
     "/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf"),
)

#: Characters outside Latin-1 that the summary uses, with their plain-text stand-ins for the
#: PDF core fonts.
TRANSLIT = {"–": "-", "—": "-", "‘": "'", "’": "'", "“": '"', "”": '"', "…": "...",
            "·": "\u00b7", "≤": "<=", "≥": ">=", "≈": "~", "→": "->", "←": "<-", "−": "-",
            "α": "alpha", "β": "beta", "γ": "gamma", "δ": "delta", "κ": "kappa",
            "λ": "lambda", "ρ": "rho", "σ": "sigma", "θ": "theta", "Γ": "Gamma", "Σ": "Sum",
            "Δ": "Delta", "√": "sqrt", "×": "x", "₀": "0", "₂": "2", "\u2009": " ",
            "\u202f": " ", "•": "-", "€": "EUR", "£": "GBP"}


def find_font():
    """(regular, bold) paths of a Unicode TrueType font for the PDF, or None.

    The bold path is the regular one when no bold face is found.
    """
    cands = []
    env = os.environ.get("PERCH_REPORT_FONT", "").strip()
    if env:
        p = Path(env)
        cands.append((str(p), str(p.with_name(p.stem + "-Bold" + p.suffix))))
    cands.extend(FONT_CANDIDATES)
    for reg, bold in cands:
        if Path(reg).is_file():
            return reg, (bold if Path(bold).is_file() else reg)
    return None


def to_latin1(text: str) -> str:
    """Text the PDF core fonts can draw: known symbols spelt out, accents kept, rest '?'."""
    out = []
    for ch in str(text):
        if ch in TRANSLIT:
            out.append(TRANSLIT[ch])
            continue
        try:
            ch.encode("latin-1")
            out.append(ch)
        except UnicodeEncodeError:
            base = unicodedata.normalize("NFKD", ch).encode("latin-1", "ignore").decode("latin-1")
            out.append(base if base else "?")
    return "".join(out)
