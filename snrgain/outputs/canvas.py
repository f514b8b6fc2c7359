"""Agg and SVG canvases for the command line's figures that measure each text once for all their figures.

Text is most of a figure's drawing time.  matplotlib's renderers measure a text (its width, height and descent)
through FreeType each time a new renderer meets it (its cache belongs to one renderer, and every figure has its
own).  The figures of one command draw the same texts over and over (the antennas' names in every legend, the tick
labels, the titles of three azimuth patterns).  :class:`RememberingRenderer` and :class:`RememberingSVGRenderer`
keep those answers for the process: the same numbers as matplotlib's own (tested: the same pixels and files), each
found once.  Only the renderers' public methods are answered so, on classes of our own; the SVG canvas is handed
to ``savefig`` by its public ``backend`` keyword (:data:`SVG_BACKEND`).  A figures' process that fills them (the
site plan drawn ahead, :mod:`snrgain.outputs.drawing`) hands them to the workers it forks.

The answers depend on the font settings in force when they were found, so the canvas is used only where those
are fixed: in the figures' processes of the command line (:func:`remember_text`, set by
:mod:`snrgain.outputs.drawing`).  Elsewhere (a notebook, where a user may change the fonts between two figures)
:func:`new_canvas` gives matplotlib's own canvas.
"""

from __future__ import annotations

import codecs

from matplotlib import cbook
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg, get_hinting_flag
from matplotlib.backends.backend_mixed import MixedModeRenderer
from matplotlib.backends.backend_svg import FigureCanvasSVG, RendererSVG

_REMEMBER = False
"""Whether :func:`new_canvas` gives the remembering canvas (the command line's figures' processes)."""

LIMIT = 50_000
"""Most answers kept of each kind; past it they are forgotten and found again (memory stays bounded)."""

_MEASURED: dict = {}  # (text, font, dpi, hinting) -> (width, height, descent)


def remember_text(on: bool = True) -> bool:
    """Have :func:`new_canvas` give the remembering canvas (on) or matplotlib's (off); the answers kept so far are
    forgotten where that changes (the fonts may have changed meanwhile).  Returns the setting before."""
    global _REMEMBER
    was = _REMEMBER
    if bool(on) != was:
        _REMEMBER = bool(on)
        forget()
    return was


def forget() -> None:
    """Forget every text measured."""
    _MEASURED.clear()


def new_canvas(fig):
    """A canvas for ``fig`` (which it attaches itself to): :class:`RememberingCanvas` where :func:`remember_text`
    is on, else matplotlib's Agg canvas."""
    return RememberingCanvas(fig) if _REMEMBER else FigureCanvasAgg(fig)


def _font_key(prop) -> tuple:
    # What a FontProperties hashes and compares by, read now (the object itself may be changed later).
    return (
        tuple(prop.get_family()),
        prop.get_style(),
        prop.get_variant(),
        prop.get_weight(),
        prop.get_stretch(),
        prop.get_size(),
        prop.get_file(),
        prop.get_math_fontfamily(),
    )


def _keep(store: dict, key, value):
    if len(store) >= LIMIT:
        store.clear()
    store[key] = value
    return value


class RememberingRenderer(RendererAgg):
    """matplotlib's Agg renderer, with each text's measure found once for the process."""

    def get_text_width_height_descent(self, s, prop, ismath):
        if ismath:
            return super().get_text_width_height_descent(s, prop, ismath)
        key = (s, _font_key(prop), self.dpi, get_hinting_flag())
        found = _MEASURED.get(key)
        if found is None:
            found = _keep(_MEASURED, key, super().get_text_width_height_descent(s, prop, ismath))
        return found


class RememberingCanvas(FigureCanvasAgg):
    """matplotlib's Agg canvas drawing with :class:`RememberingRenderer`."""

    def get_renderer(self):
        w, h = self.get_width_height(physical=True)
        key = w, h, self.figure.dpi
        if getattr(self, "_remembering_key", None) != key:
            self.renderer = RememberingRenderer(w, h, self.figure.dpi)
            self._remembering_key = key
        return self.renderer


class RememberingSVGRenderer(RendererSVG):
    """matplotlib's SVG renderer, with each text's measure (as paths: the font unhinted at a fixed size, scaled)
    found once for the process; drawn with by :class:`FigureCanvas` (the SVG files of :func:`save_svg`)."""

    def get_text_width_height_descent(self, s, prop, ismath):
        if ismath:
            return super().get_text_width_height_descent(s, prop, ismath)
        key = ("svg", s, _font_key(prop))
        found = _MEASURED.get(key)
        if found is None:
            found = _keep(_MEASURED, key, super().get_text_width_height_descent(s, prop, ismath))
        return found


class FigureCanvas(FigureCanvasSVG):
    """matplotlib's SVG canvas drawing with :class:`RememberingSVGRenderer`: this module is a backend for
    ``savefig(..., backend=SVG_BACKEND)``, matplotlib's public way to write a file with a canvas of one's own."""

    def print_svg(self, filename, *, bbox_inches_restore=None, metadata=None, **unused):
        # As FigureCanvasSVG.print_svg writes the file, with the renderer above.  savefig hands a canvas not of
        # matplotlib's every keyword it has (face colour, orientation ...), which matplotlib's own SVG writer lets go
        # unread too.
        with cbook.open_file_cm(filename, "w", encoding="utf-8") as fh:
            if not cbook.file_requires_unicode(fh):
                fh = codecs.getwriter("utf-8")(fh)
            dpi = self.figure.dpi
            self.figure.dpi = 72
            width, height = self.figure.get_size_inches()
            renderer = MixedModeRenderer(
                self.figure,
                width,
                height,
                dpi,
                RememberingSVGRenderer(width * 72, height * 72, fh, image_dpi=dpi, metadata=metadata),
                bbox_inches_restore=bbox_inches_restore,
            )
            self.figure.draw(renderer)
            renderer.finalize()


SVG_BACKEND = "module://" + __name__
"""``savefig``'s ``backend`` for an SVG file written with :class:`FigureCanvas`."""


def svg_backend() -> str | None:
    """The ``backend`` to write an SVG file with: :data:`SVG_BACKEND` where :func:`remember_text` is on, else None
    (matplotlib's own)."""
    return SVG_BACKEND if _REMEMBER else None
