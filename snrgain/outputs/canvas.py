"""An Agg canvas for the command line's figures that measures and lays out each text once for all its figures.

Text is most of a figure's drawing time.  matplotlib's Agg renderer measures a text (its width, height and
descent) through FreeType each time a new renderer meets it (its cache belongs to one renderer, and every figure
has its own), reads the font's height tables for every text it places, and shapes a text again to draw it.  The
figures of one command draw the same texts over and over (the antennas' names in every legend, the tick labels,
the titles of three azimuth patterns).  :class:`RememberingRenderer` keeps those three answers for the process:
the same numbers and glyphs as matplotlib's own (tested: the same pixels), each found once.  A figures' process
that fills them (the site plan drawn ahead, :mod:`snrgain.outputs.drawing`) hands them to the workers it forks.

The answers depend on the font settings in force when they were found, so the canvas is used only where those
are fixed: in the figures' processes of the command line (:func:`remember_text`, set by
:mod:`snrgain.outputs.drawing`).  Elsewhere (a notebook, where a user may change the fonts between two figures)
:func:`new_canvas` gives matplotlib's own canvas.
"""

from __future__ import annotations

import os
from collections import OrderedDict

from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg, get_hinting_flag
from matplotlib.backends.backend_svg import RendererSVG as _RendererSVG
from matplotlib.font_manager import fontManager as _fontManager
from matplotlib.ft2font import FT2Font
from matplotlib.text import Text
from matplotlib.textpath import TextToPath

_REMEMBER = False
"""Whether :func:`new_canvas` gives the remembering canvas (the command line's figures' processes)."""

LIMIT = 50_000
"""Most answers kept of each kind; past it they are forgotten and found again (memory stays bounded)."""

_MEASURED: dict = {}  # (text, font, dpi, hinting) -> (width, height, descent)
_LAID_OUT: dict = {}  # (text, font, dpi, hinting, features, language) -> the glyphs as _layout gives them
_HEIGHTS: dict = {}  # (font, dpi) -> (ascent, descent, line gap) of the font's tables
_GLYPHS: dict = {}  # (text, font files, features, language) -> the SVG writer's glyphs and their places
_OUTLINES: dict = {}  # a glyph's name in the SVG writer -> its outline (vertices, codes)
_FILES: dict = {}  # id of a font object of this process -> (the object, the font files it reads)

# A forked process opens the fonts anew (matplotlib empties its font cache there: FreeType's objects are not to be
# shared), so the glyphs laid out here, which name this process' font objects, are not for it; the numbers are.
if hasattr(os, "register_at_fork"):  # not on Windows, which does not fork
    os.register_at_fork(after_in_child=_LAID_OUT.clear)
    os.register_at_fork(after_in_child=_FILES.clear)


def remember_text(on: bool = True) -> bool:
    """Have :func:`new_canvas` give the remembering canvas (on) or matplotlib's (off); the answers kept so far are
    forgotten where that changes (the fonts may have changed meanwhile).  Returns the setting before."""
    global _REMEMBER
    from matplotlib.backends import backend_svg

    was = _REMEMBER
    if bool(on) != was:
        _REMEMBER = bool(on)
        forget()
        # The SVG writer makes its renderer by this name (FigureCanvasSVG.print_svg).
        backend_svg.RendererSVG = RememberingSVGRenderer if on else _RendererSVG
    return was


def forget() -> None:
    """Forget every text measured or laid out."""
    for store in (_MEASURED, _LAID_OUT, _HEIGHTS, _GLYPHS, _OUTLINES, _FILES):
        store.clear()


def new_canvas(fig):
    """A canvas for ``fig`` (which it attaches itself to): :class:`RememberingCanvas` where :func:`remember_text`
    is on, else matplotlib's Agg canvas."""
    return RememberingCanvas(fig) if _REMEMBER else FigureCanvasAgg(fig)


def _font_key(prop) -> tuple:
    # What a FontProperties hashes and compares by, as it is now (the object itself may be changed later).
    return tuple(prop.__dict__.values())


def _keep(store: dict, key, value):
    if len(store) >= LIMIT:
        store.clear()
    store[key] = value
    return value


def _font_heights(prop, dpi: float):
    """The font's ascent, descent and line gap at its size and ``dpi``, as ``Text`` reads them from the font's
    tables when the renderer does not give them (matplotlib.text.Text._get_layout): the same arithmetic, done
    once for the process."""
    key = (_font_key(prop), dpi)
    found = _HEIGHTS.get(key)
    if found is not None:
        return found
    from matplotlib.font_manager import fontManager, get_font

    font = get_font(fontManager._find_fonts_by_props(prop))
    for table_name, linegap_key, ascent_key, descent_key in (
        ("OS/2", "sTypoLineGap", "sTypoAscender", "sTypoDescender"),
        ("hhea", "lineGap", "ascent", "descent"),
    ):
        table = font.get_sfnt_table(table_name)
        if table is None:
            continue
        fontsize = prop.get_size_in_points()
        units_per_em = font.get_sfnt_table("head")["unitsPerEm"]
        scale = 1 / units_per_em * fontsize * dpi / 72
        return _keep(
            _HEIGHTS, key, (table[ascent_key] * scale, -table[descent_key] * scale, table[linegap_key] * scale)
        )
    return None, None, None  # Text measures "lp" instead


_LAYOUTS = all(
    hasattr(*where)
    for where in (
        (RendererAgg, "_draw_text_glyphs_and_boxes"),
        (RendererAgg, "_prepare_font"),
        (FT2Font, "_layout"),
        (Text, "get_fontfeatures"),
        (Text, "get_language"),
    )
)
"""Whether this matplotlib lays text out as :meth:`RememberingRenderer.draw_text` repeats it (3.11's glyph
layout); with an older one each text is drawn as matplotlib draws it, its measure still kept."""


class RememberingRenderer(RendererAgg):
    """matplotlib's Agg renderer, with each text's measure, layout and font heights found once for the process."""

    def get_text_width_height_descent(self, s, prop, ismath):
        if ismath:
            return super().get_text_width_height_descent(s, prop, ismath)
        key = (s, _font_key(prop), self.dpi, get_hinting_flag())
        found = _MEASURED.get(key)
        if found is None:
            found = _keep(_MEASURED, key, super().get_text_width_height_descent(s, prop, ismath))
        return found

    def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
        if ismath or not _LAYOUTS or mtext is None:
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        features = mtext.get_fontfeatures()
        language = mtext.get_language()
        flags = get_hinting_flag()
        try:
            key = (s, _font_key(prop), self.dpi, flags, features, language)
            items = _LAID_OUT.get(key)
        except TypeError:  # something unhashable among them: as matplotlib draws it
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        if items is None:  # as RendererAgg.draw_text lays it out
            font = self._prepare_font(prop)
            laid = font._layout(s, flags=flags, features=features, language=language)
            items = _keep(_LAID_OUT, key, tuple((i.ft_object, i.glyph_index, i.x, i.y) for i in laid))
        size = prop.get_size_in_points()
        self._draw_text_glyphs_and_boxes(
            gc, x, y, angle, ((font, size, glyph, 0, 1, gx, gy) for font, glyph, gx, gy in items), []
        )

    def _get_font_height_metrics(self, prop):
        return _font_heights(prop, self.dpi)  # Text's dpi, the figure's: the canvas made the renderer at it


class RememberingCanvas(FigureCanvasAgg):
    """matplotlib's Agg canvas drawing with :class:`RememberingRenderer`."""

    def get_renderer(self):
        w, h = self.get_width_height(physical=True)
        key = w, h, self.figure.dpi
        if self._lastKey != key:
            self.renderer = RememberingRenderer(w, h, self.figure.dpi)
            self._lastKey = key
        return self.renderer


class RememberingTextToPath(TextToPath):
    """matplotlib's text-to-path converter, with each text's glyphs and places (the font laid out unhinted at a
    fixed size) and each glyph's outline found once for the process: the SVG writer draws every text as paths,
    laying the text out and loading each of its glyphs through FreeType again for every text (a fifth of an SVG
    figure's time)."""

    def _get_font(self, prop):
        font = super()._get_font(prop)
        if id(font) not in _FILES:  # the object is kept with its files, so its id names no other while kept
            _keep(_FILES, id(font), (font, tuple(_fontManager._find_fonts_by_props(prop))))
        return font

    def get_glyphs_with_font(
        self, font, s, glyph_map=None, return_new_glyphs_only=False, *, features=None, language=None
    ):
        known = _FILES.get(id(font))
        try:
            key = None if known is None or known[0] is not font else (s, known[1], features, language)
            hash(key)
        except TypeError:
            key = None
        if key is None:
            return super().get_glyphs_with_font(
                font, s, glyph_map, return_new_glyphs_only, features=features, language=language
            )
        placed = _GLYPHS.get(key)
        if placed is None or any(name not in _OUTLINES for name, _, _ in placed):
            info, outlines, _ = super().get_glyphs_with_font(font, s, features=features, language=language)
            for name, outline in outlines.items():
                _keep(_OUTLINES, name, outline)
            placed = _keep(_GLYPHS, key, tuple((name, x, y) for name, x, y, _ in info))
        # As TextToPath.get_glyphs_with_font answers: the glyphs not in ``glyph_map`` in the order met, added to it
        # unless only those are asked for.
        if glyph_map is None:
            glyph_map = OrderedDict()
        new = OrderedDict() if return_new_glyphs_only else glyph_map
        for name, _, _ in placed:
            if name not in glyph_map:
                new[name] = _OUTLINES[name]
        return [(name, x, y, 1.0) for name, x, y in placed], new, []


_TEXT_TO_PATH = None


class RememberingSVGRenderer(_RendererSVG):
    """matplotlib's SVG renderer, with each text's measure (as paths: the font unhinted at a fixed size, scaled),
    glyphs (:class:`RememberingTextToPath`) and font heights found once for the process; used by the SVG writer
    where :func:`remember_text` is on."""

    def __init__(self, *args, **kwargs):
        global _TEXT_TO_PATH
        super().__init__(*args, **kwargs)
        if _TEXT_TO_PATH is None:
            _TEXT_TO_PATH = RememberingTextToPath()
        self._text2path = _TEXT_TO_PATH

    def get_text_width_height_descent(self, s, prop, ismath):
        if ismath:
            return super().get_text_width_height_descent(s, prop, ismath)
        key = ("svg", s, _font_key(prop))
        found = _MEASURED.get(key)
        if found is None:
            found = _keep(_MEASURED, key, super().get_text_width_height_descent(s, prop, ismath))
        return found

    def _get_font_height_metrics(self, prop):
        return _font_heights(prop, 72)  # the SVG writer draws the figure at 72 dots an inch, a unit a point
