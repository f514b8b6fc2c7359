"""Agg and SVG canvases for the command line's figures that measure each text once for all their figures, and (Agg)
draw each text from one picture of it.

Text is most of a figure's drawing time.  matplotlib's renderers measure a text (its width, height and descent)
through FreeType each time a new renderer meets it (its cache belongs to one renderer, and every figure has its
own).  The figures of one command draw the same texts over and over (the antennas' names in every legend, the tick
labels, the titles of three azimuth patterns).  :class:`RememberingRenderer` and :class:`RememberingSVGRenderer`
keep those answers for the process: the same numbers as matplotlib's own (tested: the same SVG files), each
found once.  Only the renderers' public methods are answered so, on classes of our own; the SVG canvas is handed
to ``savefig`` by its public ``backend`` keyword (:data:`SVG_BACKEND`).  A figures' process that fills them (the
site plan drawn ahead, :mod:`snrgain.outputs.drawing`) hands them to the workers it forks.

Drawing a text in a PNG is the other half of its cost: matplotlib 3.11 shapes each text afresh and renders it glyph
by glyph at its sub-pixel place.  :class:`RememberingRenderer` lays a text out once, through the public calls of
matplotlib's FreeType font (``set_text``, ``draw_glyphs_to_bitmap``, ``get_image``: the way matplotlib drew a text
up to 3.10), keeps its measure and its picture, and puts the picture down with the renderer's public
``draw_image`` at the nearest whole pixel wherever the text comes again, level or turned a quarter turn (a y axis'
label).  The letters then stand within about a pixel of where matplotlib 3.11 puts them (tested: the same measure,
the same ink, its box within a pixel on every side).  A text turned otherwise, set in mathematics, asking for font
features, clipped (``draw_image`` clips a pixel further than ``draw_text``), or with a character its font lacks
(matplotlib would take it from a fallback font) is drawn by matplotlib's own ``draw_text``; so is every text where
the font's calls refuse.

The measures and the pictures depend on the font settings in force when they were found (the families, the hinting
factor), so the canvas is used only where those are fixed: in the figures' processes of the command line
(:func:`remember_text`, set by :mod:`snrgain.outputs.drawing`).  Elsewhere (a notebook, where a user may change the
fonts between two figures) :func:`new_canvas` gives matplotlib's own canvas.
"""

from __future__ import annotations

import codecs

import matplotlib as mpl
import numpy as np
from matplotlib import cbook
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg, get_hinting_flag
from matplotlib.backends.backend_mixed import MixedModeRenderer
from matplotlib.backends.backend_svg import FigureCanvasSVG, RendererSVG
from matplotlib.font_manager import findfont, get_font

_REMEMBER = False
"""Whether :func:`new_canvas` gives the remembering canvas (the command line's figures' processes)."""

LIMIT = 50_000
"""Most answers kept of each kind; past it they are forgotten and found again (memory stays bounded)."""

_MEASURED: dict = {}  # (text, font, dpi, hinting) -> (width, height, descent)

PICTURES = 5_000
"""Most texts' pictures kept (:class:`RememberingRenderer`): past it they are forgotten and made again."""

_PICTURES: dict = {}  # (text, font, dpi, hinting, antialiased) -> (coverage [uint8 rows], x offset, descent) or None
_INKED: dict = {}  # (picture's key, RGBA [0-255], quarter turns) -> the picture in that colour, turned, as RGBA
_WHOLE = True
"""Whether :class:`RememberingRenderer` draws texts from their pictures (off for good once the font's calls refuse)."""


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
    """Forget every text measured, and every text's picture."""
    _MEASURED.clear()
    _PICTURES.clear()
    _INKED.clear()


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


class RememberingRenderer(RendererAgg):
    """matplotlib's Agg renderer, with each text's measure found once for the process and each text drawn from one
    picture of it (module docstring): a text is laid out once for both, measured as matplotlib measures it (its
    ``get_text_width_height_descent``: the font's ``set_text``, then the width, height and descent)."""

    def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
        global _WHOLE
        quarter = round(angle / 90.0) % 4 if abs(angle / 90.0 - round(angle / 90.0)) < 1e-9 else None
        shaped = mtext is not None and any(
            getattr(mtext, name, lambda: None)() is not None for name in ("get_fontfeatures", "get_language")
        )
        clipped = gc.get_clip_rectangle() is not None or gc.get_clip_path() != (None, None)
        if ismath or shaped or clipped or quarter not in (0, 1) or not _WHOLE:
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        antialiased = bool(gc.get_antialiased())
        key = (s, _font_key(prop), self.dpi, get_hinting_flag(), antialiased)
        try:
            found = _PICTURES[key] if key in _PICTURES else self._lay_out(s, prop, antialiased)[1]
        except (AttributeError, TypeError, ValueError, RuntimeError):  # the font's calls refuse: matplotlib's way
            _WHOLE = False
            found = None
        if found is None:  # (also a character the font lacks: matplotlib takes it from a fallback font)
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        coverage, xo, descent = found
        rgba = gc.get_rgb()
        alpha = gc.get_alpha() if len(rgba) == 3 or gc.get_forced_alpha() else rgba[3]
        colour = tuple(int(round(255 * c)) for c in (*rgba[:3], alpha))
        inked = _INKED.get((key, colour, quarter))
        if inked is None:
            inked = np.empty((*coverage.shape, 4), dtype=np.uint8)
            inked[..., :3] = colour[:3]
            inked[..., 3] = (coverage.astype(np.uint16) * colour[3] + 127) // 255
            # turned as the text turns (counterclockwise), then bottom row first, as draw_image takes an image
            inked = np.ascontiguousarray(np.rot90(inked, quarter)[::-1])
            inked = _keep(_INKED, (key, colour, quarter), inked, PICTURES)
        # The picture's bottom left corner at the nearest whole pixel: the pen's place moved along the baseline by
        # the picture's offset and below it by the descent and a pixel (as matplotlib <= 3.10 put it), turned with
        # the text (y downwards here); a quarter turn about that corner puts the picture's bottom left a picture's
        # height to its left.  draw_image counts y upwards from the bottom.
        below = descent + 1.0
        if quarter == 0:
            left, bottom = round(x + xo), round(y + below)
        else:
            left, bottom = round(x + below) - coverage.shape[0], round(y - xo)
        self.draw_image(gc, left, self.height - bottom, inked)

    def get_text_width_height_descent(self, s, prop, ismath):
        global _WHOLE
        if ismath:
            return super().get_text_width_height_descent(s, prop, ismath)
        key = (s, _font_key(prop), self.dpi, get_hinting_flag())
        found = _MEASURED.get(key)
        if found is None and _WHOLE:
            try:
                found = self._lay_out(s, prop, bool(mpl.rcParams["text.antialiased"]))[0]
            except (AttributeError, TypeError, ValueError, RuntimeError):  # as in draw_text
                _WHOLE = False
        if found is None:
            found = _keep(_MEASURED, key, super().get_text_width_height_descent(s, prop, ismath))
        return found

    def _lay_out(self, s, prop, antialiased: bool) -> tuple[tuple | None, tuple | None]:
        """Lay ``s`` out once with ``prop``'s font (matplotlib's public ``findfont`` and ``get_font``, set to the
        size as matplotlib's renderer sets it): keep its measure (width, height, descent [px]) and its picture
        drawn ``antialiased`` (coverage, the picture's offset along the baseline and the descent [px]); both
        returned.  (None, None) where the font lacks one of the characters (nothing kept: matplotlib's own way
        measures and draws the text, with its fallback fonts)."""
        key = (s, _font_key(prop), self.dpi, get_hinting_flag())
        font = get_font(findfont(prop))
        if any(font.get_char_index(ord(c)) == 0 for c in s if c not in "\n\r"):
            _keep(_PICTURES, (*key, antialiased), None, PICTURES)
            return None, None
        font.clear()
        font.set_size(prop.get_size_in_points(), self.dpi)
        font.set_text(s, 0.0, flags=get_hinting_flag())
        w, h = font.get_width_height()  # of the unturned text, in 64ths of a pixel
        descent = font.get_descent() / 64.0
        measure = _keep(_MEASURED, key, (w / 64.0, h / 64.0, descent))
        font.draw_glyphs_to_bitmap(antialiased=antialiased)
        xo, _ = font.get_bitmap_offset()
        coverage = np.array(font.get_image(), dtype=np.uint8)  # a copy: the font's buffer is drawn over next
        return measure, _keep(_PICTURES, (*key, antialiased), (coverage, xo / 64.0, descent), PICTURES)


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
