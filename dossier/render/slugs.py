"""Slugs: safe, readable file names for the pages of cases, species and meetings.

Lower-case ASCII letters, digits and single hyphens; never a reserved device
name or a name the site uses itself; the same set of keys always gives the
same slugs.
"""
from __future__ import annotations

import hashlib
import re
import unicodedata
from typing import Sequence

_RESERVED = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(10)),
             *(f"lpt{i}" for i in range(10)), "index", "methods"}


def slugify(text: str, max_length: int = 60) -> str:
    """A lower-case ASCII file-name stem: letters, digits and single hyphens.

    Charges keep their meaning (``NH4+`` → ``nh4-plus``); reserved device
    names and names the site uses itself get a suffix; never empty.
    """
    t = unicodedata.normalize("NFKD", str(text))
    t = t.replace("+", " plus ").replace("°", " deg ")
    t = re.sub(r"-(?=\s*\)|\s*$)", " minus ", t)  # trailing minus of a charge
    t = t.encode("ascii", "ignore").decode("ascii").lower()
    t = re.sub(r"[^a-z0-9]+", "-", t).strip("-")
    t = t[:max_length].strip("-") or "item"
    if t in _RESERVED:
        t += "-x"
    return t


def unique_slugs(keys: Sequence[tuple[object, str]]) -> dict[object, str]:
    """A slug per key (key, readable text), made unique in sorted order.

    A clash (``CO`` and ``Co``) gets a short hash of the key's text, so the
    same set of keys always gives the same slugs.
    """
    out: dict[object, str] = {}
    used: set[str] = set()
    wanted: dict[str, list[tuple[object, str]]] = {}
    for key, text in keys:
        wanted.setdefault(slugify(text), []).append((key, text))
    for slug in sorted(wanted):
        group = sorted(wanted[slug], key=lambda kt: kt[1])
        for i, (key, text) in enumerate(group):
            s = slug
            if len(group) > 1 or s in used:
                s = f"{slug}-{hashlib.sha256(text.encode('utf-8')).hexdigest()[:6]}"
            while s in used:
                s += "-x"
            used.add(s)
            out[key] = s
    return out


def case_slugs(ids: Sequence[str]) -> dict[str, str]:
    """Slugs of case ids whose pages (``<slug>.html``, ``<slug>-derivation.html``) never clash."""
    slugs = unique_slugs([(i, i) for i in ids])
    out = {}
    for key, s in slugs.items():
        if s.endswith("-derivation"):
            s += "-case"
        out[key] = s
    pages = [p for s in out.values() for p in (s, s + "-derivation")]
    if len(set(pages)) != len(pages):  # pathological ids: fall back to hashed slugs
        out = {k: f"{s}-{hashlib.sha256(k.encode('utf-8')).hexdigest()[:8]}"
               for k, s in out.items()}
    return out


__all__ = ["case_slugs", "slugify", "unique_slugs"]
