"""Text alternatives carried by the figure files themselves.

A figure is shown on a page as an ``<img>`` with its text alternative and its
data table beside it (``templates/_macros.html``); the SVG file also names
itself, so that a reader who opens it alone (or a tool that indexes it) meets
the same title and description.
"""
from __future__ import annotations

import html
import re

_SVG_OPEN_RE = re.compile(r"<svg\b[^>]*>")


def labelled_svg(svg: str, title: str, alt: str) -> str:
    """``svg`` with a ``<title>`` and a ``<desc>`` (the figure's text alternative) as
    the first children of its root and ``role="img"``, so that the file opened by
    itself is described as the page's ``<img>`` is; a labelled SVG is left as it is."""
    m = _SVG_OPEN_RE.search(svg)
    if m is None or 'role="img"' in m.group(0):
        return svg
    opening = m.group(0)[:-1] + ' role="img" aria-labelledby="figure-title figure-desc">'
    label = (f'\n <title id="figure-title">{html.escape(title)}</title>'
             f'\n <desc id="figure-desc">{html.escape(alt)}</desc>')
    return svg[:m.start()] + opening + label + svg[m.end():]


__all__ = ["labelled_svg"]
