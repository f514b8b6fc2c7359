"""Agg and SVG canvases for the command line's figures that measure each text once for all their figures, and (Agg)
draw each text from one picture of it.

Text is most of a figure's drawing time.  matplotlib's renderers measure a text (its width, height and descent)
through FreeType each time a new renderer meets it (its cache belongs to one renderer, and every figure has its
own).  The figures of one command draw the same texts over and over (the antennas' names in every legend, the tick
labels, the titles of three azimuth patterns).  :class:`RememberingRenderer` and :class:`RememberingSVGRenderer`
keep those answers for the process: the same numbers as matplotlib's own (tested: the same SVG files), each
found once.  The SVG canvas is handed to ``savefig`` by its public ``backend`` keyword (:data:`SVG_BACKEND`).  A
figures' process that fills them (the site plan drawn ahead, :mod:`snrgain.outputs.drawing`) hands them to the
workers it forks.

Drawing a text in a PNG is the other half of its cost.  matplotlib 3.11 lays each text out afresh (HarfBuzz shaping,
a fifth of a millisecond) and renders it glyph by glyph at its sub-pixel place; :class:`RememberingRenderer` renders
a text once, whole, as matplotlib did up to 3.10 (FreeType's ``set_text`` and ``draw_glyphs_to_bitmap``, the picture
put down at the nearest whole pixel and turned there by the renderer's ``draw_text_image``, as matplotlib's own TeX
text still is; its offsets from the pen turned with it, which 3.10 did for the descent only), and puts the same
picture down wherever the text comes again.  The letters then stand within about a pixel of where 3.11 puts them
(tested: the same measure, the same ink, its box within a pixel on every side, turned or not).  A PNG figure whose
texts were met before draws in about two thirds of the time, a figure of new texts about a tenth quicker (measured
on the realistic site's figures).

Laying a text out, matplotlib 3.11 reads the font's line metrics (its ascent, descent and line gap) from the
font's tables each time, finding the font file first: more time than the text's own measure.  Both remembering
renderers answer the question matplotlib's layout asks a renderer first (``_get_font_height_metrics``, an internal
hook of matplotlib >= 3.11; older versions never ask) from numbers found once per font and size, by the same reading
of the same tables: the same files (tested), the figures about a tenth quicker.  Where that reading fails the renderer
answers nothing and matplotlib reads the tables itself.

matplotlib internals used here, four in all, each with matplotlib's own way as the fallback where it is missing or
refuses: the Agg renderer's ``_prepare_font`` and its ``_renderer.draw_text_image`` (a text's picture; the text is
then drawn by matplotlib's ``draw_text`` from then on), the text layout's ``_get_font_height_metrics`` hook and
``fontManager._find_fonts_by_props`` (the line metrics; matplotlib then reads them itself).

The answers depend on the font settings in force when they were found, so the canvas is used only where those
are fixed: in the figures' processes of the command line (:func:`remember_text`, set by
:mod:`snrgain.outputs.drawing`).  Elsewhere (a notebook, where a user may change the fonts between two figures)
:func:`new_canvas` gives matplotlib's own canvas.
"""

from __future__ import annotations

import codecs
import math

import matplotlib as mpl
import numpy as np
from matplotlib import cbook
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg, get_hinting_flag
from matplotlib.backends.backend_mixed import MixedModeRenderer
from matplotlib.backends.backend_svg import FigureCanvasSVG, RendererSVG
from matplotlib.font_manager import fontManager, get_font

_REMEMBER = False
"""Whether :func:`new_canvas` gives the remembering canvas (the command line's figures' processes)."""

LIMIT = 50_000
"""Most answers kept of each kind; past it they are forgotten and found again (memory stays bounded)."""

_MEASURED: dict = {}  # (text, font, dpi, hinting) -> (width, height, descent)

PICTURES = 5_000
"""Most texts' pictures kept (:class:`RememberingRenderer`): past it they are forgotten and rendered again."""

_HEIGHTS: dict = {}  # (font, dpi) -> (ascent, descent, line gap) [px] of the font's line (_font_heights)
_PICTURES: dict = {}  # (text, font, dpi, hinting, antialiased) -> (coverage [uint8 rows], descent, x and y offset) [px]
_WHOLE = True
"""Whether :class:`RememberingRenderer` draws texts from their pictures (off for good once the renderer's internals
it uses refuse)."""


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
    """Forget every text measured, every text's picture and every font's line metrics."""
    _MEASURED.clear()
    _PICTURES.clear()
    _HEIGHTS.clear()


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


def _keep(store: dict, key, value, limit: int = LIMIT):
    if len(store) >= limit:
        store.clear()
    store[key] = value
    return value


def _font_heights(prop, dpi: float) -> tuple:
    """(ascent, descent, line gap) [px] of the line of ``prop``'s font at ``dpi``, as matplotlib 3.11's text layout
    reads them (``Text._get_layout``: the font found as its renderers find it, the tables "OS/2", else "hhea", scaled
    by the size over the font's units per em), found once per font and dpi; (None, None, None) where they cannot be
    read so (matplotlib then reads them itself)."""
    key = (_font_key(prop), dpi)
    found = _HEIGHTS.get(key)
    if found is None:
        found = (None, None, None)
        try:
            font = get_font(fontManager._find_fonts_by_props(prop))
            for table_name, gap, ascent, descent in (
                ("OS/2", "sTypoLineGap", "sTypoAscender", "sTypoDescender"),
                ("hhea", "lineGap", "ascent", "descent"),
            ):
                table = font.get_sfnt_table(table_name)
                if table is None:
                    continue
                scale = 1 / font.get_sfnt_table("head")["unitsPerEm"] * prop.get_size_in_points() * dpi / 72
                found = (table[ascent] * scale, -table[descent] * scale, table[gap] * scale)
                break
        except (AttributeError, TypeError, KeyError, OSError, RuntimeError):
            pass
        _keep(_HEIGHTS, key, found)
    return found


class RememberingRenderer(RendererAgg):
    """matplotlib's Agg renderer, with each text's measure found once for the process and each text drawn from one
    picture of it (module docstring).  A text is laid out once for both: measured as matplotlib measures it (its
    ``get_text_width_height_descent``: FreeType's ``set_text``, then the width, height and descent) and rendered from
    the same layout, with the antialiasing texts are drawn with unless told otherwise."""

    def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
        global _WHOLE
        shaped = mtext is not None and any(
            getattr(mtext, name, lambda: None)() is not None for name in ("get_fontfeatures", "get_language")
        )
        if ismath or shaped or not _WHOLE:  # mathematics, or a text asking HarfBuzz for features: matplotlib's way
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        antialiased = bool(gc.get_antialiased())
        try:
            found = _PICTURES.get((s, _font_key(prop), self.dpi, get_hinting_flag(), antialiased))
            if found is None:
                found = self._lay_out(s, prop, antialiased)[1]
            picture, descent, xo, yo = found
            # The picture's corner at the nearest whole pixel: its offsets from the pen (along the baseline, and the
            # descent and a pixel below it, as matplotlib <= 3.10 put it) turned with the text (y downwards)
            cos, sin = math.cos(math.radians(angle)), math.sin(math.radians(angle))
            below = yo + descent + 1.0
            left = round(x + xo * cos + below * sin)
            top = round(y - xo * sin + below * cos)
            self._renderer.draw_text_image(picture, left, top, angle, gc)
        except (AttributeError, TypeError):  # the internals differ in this matplotlib: its own way from now on
            _WHOLE = False
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)

    def get_text_width_height_descent(self, s, prop, ismath):
        global _WHOLE
        if ismath:
            return super().get_text_width_height_descent(s, prop, ismath)
        key = (s, _font_key(prop), self.dpi, get_hinting_flag())
        found = _MEASURED.get(key)
        if found is None and _WHOLE:
            try:
                found = self._lay_out(s, prop, bool(mpl.rcParams["text.antialiased"]))[0]
            except (AttributeError, TypeError):  # as in draw_text
                _WHOLE = False
        if found is None:
            found = _keep(_MEASURED, key, super().get_text_width_height_descent(s, prop, ismath))
        return found

    def _get_font_height_metrics(self, prop):
        # asked by matplotlib >= 3.11's text layout (module docstring); the figure's dpi is this renderer's
        return _font_heights(prop, self.dpi)

    def _lay_out(self, s, prop, antialiased: bool) -> tuple[tuple, tuple]:
        """Lay ``s`` out once: keep its measure (width, height, descent [px], as matplotlib's
        ``get_text_width_height_descent`` finds them) and its picture drawn ``antialiased`` (coverage, descent and
        the picture's offsets from the pen [px]); both returned."""
        font = self._prepare_font(prop)
        font.set_text(s, 0.0, flags=get_hinting_flag())
        w, h = font.get_width_height()  # of the unturned text, in 64ths of a pixel
        descent = font.get_descent() / 64.0
        measure = _keep(_MEASURED, (s, _font_key(prop), self.dpi, get_hinting_flag()), (w / 64.0, h / 64.0, descent))
        font.draw_glyphs_to_bitmap(antialiased=antialiased)
        xo, yo = font.get_bitmap_offset()
        picture = np.array(font.get_image(), dtype=np.uint8)  # a copy: the font's buffer is drawn over next
        key = (s, _font_key(prop), self.dpi, get_hinting_flag(), antialiased)
        return measure, _keep(_PICTURES, key, (picture, descent, xo / 64.0, yo / 64.0), PICTURES)


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

    def _get_font_height_metrics(self, prop):
        # asked by matplotlib >= 3.11's text layout (module docstring); :class:`FigureCanvas` draws with the figure at
        # 72 dpi, one unit a point, as matplotlib's SVG writer does
        return _font_heights(prop, 72.0)


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
