"""The look every figure of a dossier shares, and its SVG output.

One palette (ours: ink, one muted blue, greys), one matplotlib style, fixed
margins, and SVG written so that rebuilds are byte-stable: a fixed hash
salt, no date or tool version in the metadata.  Text stays text in the SVG
(``svg.fonttype`` none), so a reader can select and search it.
:class:`Figure` is what every figure function returns.  matplotlib is
imported only inside these functions.
"""
from __future__ import annotations

import functools
import io
import math
from dataclasses import dataclass

from dossier.constants import ZERO_CELSIUS
from dossier.render.alt_text import labelled_svg

# Our own calm, print-first palette: ink, one muted blue, greys.
INK = "#1f2a33"
BLUE = "#2f5d7c"
GREY = "#6b7780"
PALE = "#e6ecf0"

STYLE = {
    "svg.hashsalt": "dossier-figures-1",
    "svg.fonttype": "none",
    "font.family": "DejaVu Sans",
    "font.size": 9.0,
    "axes.edgecolor": GREY,
    "axes.labelcolor": INK,
    "axes.linewidth": 0.8,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.color": "#d5dbe0",
    "grid.linewidth": 0.5,
    "xtick.color": GREY,
    "ytick.color": GREY,
    "xtick.labelcolor": INK,
    "ytick.labelcolor": INK,
    "legend.frameon": False,
    "legend.fontsize": 8.0,
    "lines.linewidth": 1.6,
    "path.simplify": False,
}

#: SVG metadata: no date, no tool version, so identical input gives identical bytes.
SVG_METADATA = {"Date": None, "Creator": None, "Format": None, "Type": None}


@dataclass(frozen=True)
class Figure:
    """One drawn figure with its words and its data."""

    name: str  # file stem, e.g. "gibbs"
    title: str
    caption: str
    alt: str  # short text alternative for the image
    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    svg: str

    def __post_init__(self) -> None:
        # the SVG file names itself too, for a reader who opens it alone
        object.__setattr__(self, "svg", labelled_svg(self.svg, self.title, self.alt))



@functools.lru_cache(maxsize=1)
def svg_canvas_class():
    """A matplotlib SVG canvas whose renderers share one text-to-path converter.

    matplotlib gives every renderer (one per saved figure) its own converter,
    and with it its own cache of parsed mathematics, so each label in ``$…$``
    was parsed again for every figure, twice (once to measure it, once to
    draw it); parsing is most of what a label costs.  Sharing the converter
    keeps those parses for the process: the four panels' labels of every
    species figure are parsed once per build.  The SVG written is the same,
    byte for byte (the parse depends only on the text, the font and the dpi,
    which are its cache key, and every figure draws under the one
    :data:`STYLE`)."""
    from matplotlib.backends.backend_mixed import MixedModeRenderer
    from matplotlib.backends.backend_svg import FigureCanvasSVG, RendererSVG
    from matplotlib.textpath import TextToPath

    shared = TextToPath()

    class SharedTextRenderer(RendererSVG):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._text2path = shared

    class SharedTextCanvas(FigureCanvasSVG):
        def print_svg(self, filename, *, bbox_inches_restore=None, metadata=None,
                      **_print_figure_options):
            # FigureCanvasSVG.print_svg (matplotlib 3.11) with the shared renderer;
            # ``filename`` is always the text buffer of :func:`svg_text`; the face
            # colour and the other options print_figure passes were applied by it
            dpi = self.figure.dpi
            self.figure.dpi = 72
            width, height = self.figure.get_size_inches()
            renderer = MixedModeRenderer(
                self.figure, width, height, dpi,
                SharedTextRenderer(width * 72, height * 72, filename, image_dpi=dpi,
                                   metadata=metadata),
                bbox_inches_restore=bbox_inches_restore)
            self.figure.draw(renderer)
            renderer.finalize()

    return SharedTextCanvas


def mpl_figure(width: float, height: float):
    """A bare matplotlib figure saved through :func:`svg_canvas_class`."""
    from matplotlib.figure import Figure as MplFigure

    fig = MplFigure(figsize=(width, height))
    svg_canvas_class()(fig)
    return fig


def new_figure(width: float = 6.4, height: float = 3.4, top_axis: bool = True):
    """A figure with fixed margins (faster and steadier than automatic layout)."""
    fig = mpl_figure(width, height)
    fig.subplots_adjust(left=0.72 / width, right=1 - 0.18 / width, bottom=0.5 / height,
                        top=1 - (0.55 if top_axis else 0.3) / height)
    return fig


def svg_text(fig) -> str:
    buf = io.StringIO()
    fig.savefig(buf, format="svg", metadata=SVG_METADATA, transparent=False,
                facecolor="white")
    return buf.getvalue()


def with_style(fn):
    """Run a drawing function under the fixed style, with matplotlib on Agg."""
    import matplotlib

    matplotlib.use("Agg", force=False)
    with matplotlib.rc_context(STYLE):
        return fn()


def celsius_axis(ax) -> None:
    sec = ax.secondary_xaxis("top", functions=(lambda t: t - ZERO_CELSIUS,
                                               lambda c: c + ZERO_CELSIUS))
    sec.set_xlabel("t / °C", color=GREY)
    sec.tick_params(colors=GREY)


def cell(x: float, digits: int = 2) -> str:
    """A number for a figure's data table ('–' where there is none)."""
    return "–" if x is None or not math.isfinite(x) else f"{x:.{digits}f}"


__all__ = ["BLUE", "Figure", "GREY", "INK", "PALE", "STYLE", "SVG_METADATA", "cell",
           "celsius_axis", "mpl_figure", "new_figure", "svg_canvas_class", "svg_text",
           "with_style"]
