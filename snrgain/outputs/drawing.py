"""Figures drawn side by side: each figure made and serialised (PNG or SVG bytes) in a worker process.

Drawing is most of the time of ``report`` and ``figures`` after the evaluation, and one figure does not need
another, so on a machine with more than one core the figures are shared among forked workers.  A worker inherits
the jobs by the fork and sends back only the bytes.  The heaviest figures are handed out first (``cost``), so no
worker is left with a large one at the end.

Matplotlib takes a good part of a second to import and to load its fonts; :class:`Drawer` does that in a helper
process started before the evaluation, on the other core, while the command evaluates the scenario.  When the
results are there they are sent to the helper once (pickled, a few MB), and the helper draws them with workers it
forks then, which inherit matplotlib, the fonts and the results, drawing beside them (:func:`draw_all`).  The
command itself never imports matplotlib.

Where fork is not available (Windows, macOS' default), with one core, one figure, or ``SNRGAIN_WORKERS=1``, the
figures are drawn one after the other in this process: the bytes are the same either way (tested).

Each figure is saved as ``savefig(bbox_inches="tight")`` saves it, with one draw instead of two
(:func:`save_figure`): the figure is drawn with a margin round it and cut to what was drawn (PNG) or to the
artists' box measured by the renderer that drew them (SVG); a PNG's rows are packed here (:func:`png_bytes`, a
third of Pillow's time).  The figures lay themselves out at fixed margins (snrgain.outputs.plots), not by measuring
every text first, and the helper makes their empty axes and ticks ahead while the command evaluates
(:meth:`Drawer.prepare`).  A figure that needs no results (the site plan) is drawn by the helper while the command
still evaluates (:meth:`Drawer.ahead`).
"""

from __future__ import annotations

import contextlib
import io
import multiprocessing
import os
import pickle
from collections.abc import Callable, Iterator, Sequence
from functools import lru_cache, partial

from snrgain.memo import Memo
from snrgain.processes import worker_start, workers

_JOBS: Sequence[tuple[Callable, str, dict]] = ()
"""The jobs of the current drawing, read by forked workers (set before the pool forks)."""

DRAWING_RC = {"text.hinting": "none"}
"""matplotlib settings the command line's figures are drawn with (:func:`draw_all`, :class:`Drawer`): glyphs drawn
unhinted (as the SVG writer's text paths already are) cost less to render than through the fonts' hinting
programs (a tenth of a PNG figure's time); the letters stand on fractional pixels, a line of text a pixel or two
wider or narrower."""


@contextlib.contextmanager
def drawing_settings():
    """A context in which matplotlib draws with :data:`DRAWING_RC` and new figures measure each text once
    (:func:`snrgain.outputs.canvas.remember_text`), both restored after."""
    import matplotlib as mpl

    from snrgain.outputs.canvas import remember_text

    with mpl.rc_context(DRAWING_RC):
        was = remember_text(True)
        try:
            yield
        finally:
            remember_text(was)


def _drawing_process() -> None:
    """Set this process (the figures' helper, a worker of it: processes of their own) to draw as
    :func:`drawing_settings` draws, for good."""
    import matplotlib as mpl

    from snrgain.outputs.canvas import remember_text

    mpl.rcParams.update(DRAWING_RC)
    remember_text(True)


def figure_bytes(fig, fmt: str, **savefig) -> bytes:
    """One figure serialised as PNG or SVG (:func:`save_figure`).

    The figure is left as it is, to be let go by the caller: ``Figure.clear()`` would build every axes' ticks
    again (a tenth of a figure's time), and a figure that is not pyplot's is freed with its last reference."""
    buf = io.BytesIO()
    save_figure(fig, buf, fmt, **savefig)
    return buf.getvalue()


def save_figure(fig, target, fmt: str, *, svg_text: bool = False, **savefig) -> None:
    """``fig.savefig(target, format=fmt, **savefig)`` with one draw instead of two for ``bbox_inches="tight"``.

    ``svg_text``: an SVG's letters written as text (``<text>`` elements in the font the figure names, the viewer's
    font standing in where that one is missing), not as the glyphs' outlines: searchable and selectable, files a
    third smaller, a fifth less to draw (what the report inlines in its HTML).  Nothing for a PNG.

    A PNG is drawn once with a margin and cut to what was drawn (:func:`_png_one_draw`), an SVG drawn once with a
    margin and its view box set to the artists' box measured with the renderer that drew them
    (:func:`_svg_one_draw`): the same pictures as savefig's.  Where those do not apply, the same bytes as savefig's,
    the tight box found without savefig's first draw (:func:`tight_box`).  PNG-only keywords (``pil_kwargs``) are
    dropped for SVG.

    In an SVG an image drawn cell for cell (interpolation "nearest", as the sky's maps) is written at its own
    resolution and shown cell for cell by the viewer (matplotlib's interpolation "none": its own PNG, marked to be
    drawn pixelated), not resampled at the figure's dpi first: the same picture, sharp at any zoom (measured on the
    realistic site's sky: the file 15 % smaller, written 15 % quicker).  A PNG resamples as before ("none" would
    leave the last, partly covered column of pixels blank there)."""
    from matplotlib.layout_engine import PlaceHolderLayoutEngine

    from snrgain.outputs.canvas import svg_backend

    if fmt != "png":
        savefig.pop("pil_kwargs", None)
    if fmt == "svg" and svg_text:
        import matplotlib as mpl

        with mpl.rc_context({"svg.fonttype": "none"}):
            save_figure(fig, target, fmt, **savefig)
        return
    cells = [] if fmt != "svg" else [im for ax in fig.axes for im in ax.images if _cell_image(im)]
    if cells:
        switched = []
        try:
            for im in cells:
                im.set_interpolation("none")
                switched.append(im)
            save_figure(fig, target, fmt, **savefig)
        finally:
            for im in switched:
                im.set_interpolation("nearest")
        return
    if fmt == "svg" and savefig.get("backend") is None and svg_backend():
        savefig["backend"] = svg_backend()  # the SVG canvas that measures each text once (the figures' processes)
    if fmt == "png" and _png_one_draw(fig, target, **savefig):
        return
    if fmt == "svg" and _svg_one_draw(fig, target, **savefig):
        return
    engine = fig.get_layout_engine()
    if (
        savefig.get("bbox_inches") != "tight"
        or fmt not in ("png", "svg")
        or not (engine is None or isinstance(engine, PlaceHolderLayoutEngine))
    ):
        fig.savefig(target, format=fmt, **savefig)  # e.g. a layout engine that works at each draw: savefig's way
        return
    savefig["bbox_inches"] = tight_box(fig, fmt, savefig.get("dpi"), savefig.pop("pad_inches", None))
    # The placeholder that Figure.tight_layout() leaves behind lays out nothing, but would still make savefig draw
    # the figure once before the file (to let a layout engine work).
    fig.set_layout_engine(None)
    try:
        fig.savefig(target, format=fmt, **savefig)
    finally:
        if engine is not None:
            fig.set_layout_engine(engine)


def _cell_image(im) -> bool:
    """Whether ``im`` is a plain image (imshow's) drawn cell for cell ("nearest"), which an SVG can carry at its own
    resolution (:func:`save_figure`); other image kinds keep their own interpolation."""
    from matplotlib.image import AxesImage

    return type(im) is AxesImage and im.get_interpolation() == "nearest"


MARGIN_INCHES = 1.0
"""Room drawn around a figure for what runs past its edges (an outside legend, a long title), which
``bbox_inches="tight"`` keeps (:func:`_png_one_draw`)."""


def _png_one_draw(fig, target, *, dpi=None, bbox_inches=None, pad_inches=None, pil_kwargs=None, **rest) -> bool:
    """Write ``fig`` as ``savefig(target, format="png", dpi=dpi, bbox_inches="tight", ...)`` would, with one draw.

    The figure is drawn once on its own Agg canvas widened by :data:`MARGIN_INCHES` on every side (savefig given
    that box, writing the raw pixels: the artists stay where they are, the figure's face fills the rest), and the
    image is cut to what was drawn there (every pixel not of the face colour) and ``pad_inches`` around it.
    savefig instead measures every artist's extent (a second pass over all of them) and draws again into a canvas
    of that size: the same picture, cut to the ink instead of the text boxes (a few pixels tighter).

    Only where that is the same picture: the figure on an Agg canvas at the file's ``dpi``, an opaque face, a
    tight box asked for and nothing else of savefig's, and nothing drawn as far as the margin's edge (it could
    run on past it).  Returns False, having written nothing, otherwise."""
    import matplotlib as mpl
    import numpy as np
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.layout_engine import PlaceHolderLayoutEngine

    from snrgain.outputs.canvas import RememberingCanvas

    if dpi is None:
        dpi = mpl.rcParams["savefig.dpi"]
    if dpi == "figure":
        dpi = fig.dpi
    engine = fig.get_layout_engine()
    face = mpl.colors.to_rgba(fig.get_facecolor())
    if (
        rest
        or bbox_inches != "tight"
        or type(fig.canvas) not in (FigureCanvasAgg, RememberingCanvas)
        or dpi != fig.dpi
        or not (engine is None or isinstance(engine, PlaceHolderLayoutEngine))  # one that acts at each draw
        or mpl.rcParams["savefig.facecolor"] != "auto"
        or mpl.rcParams["savefig.edgecolor"] != "auto"
        or face[3] != 1
        or not fig.patch.get_visible()
    ):
        return False
    if pad_inches is None:
        pad_inches = mpl.rcParams["savefig.pad_inches"]
    canvas = fig.canvas
    w, h = fig.get_size_inches()
    m = MARGIN_INCHES
    from matplotlib.transforms import Bbox

    # savefig draws the figure once on the widened box given it (no measuring first) and writes the raw pixels; the
    # canvas' size in that draw gives their rows and columns.
    sizes = []
    cid = canvas.mpl_connect("draw_event", lambda event: sizes.append(event.canvas.get_width_height(physical=True)))
    buf = io.BytesIO()
    fig.set_layout_engine(None)  # a placeholder would make savefig draw once first
    try:
        with ticks_fixed(fig):
            fig.savefig(buf, format="rgba", dpi=dpi, bbox_inches=Bbox.from_extents(-m, -m, w + m, h + m))
    finally:
        canvas.mpl_disconnect(cid)
        if engine is not None:
            fig.set_layout_engine(engine)
    if len(sizes) != 1 or len(buf.getbuffer()) != sizes[0][0] * sizes[0][1] * 4:
        return False
    cols_px, rows_px = sizes[0]
    image = np.frombuffer(buf.getbuffer(), dtype=np.uint8).reshape(rows_px, cols_px, 4)
    packed = image.view(np.uint32)[..., 0]  # one 32-bit word a pixel
    ink = packed != np.array(np.round(np.multiply(face, 255)), dtype=np.uint8).view(np.uint32)[0]
    rows = np.flatnonzero(ink.any(axis=1))
    cols = np.flatnonzero(ink.any(axis=0))
    if not rows.size or rows[0] == 0 or cols[0] == 0 or rows[-1] == ink.shape[0] - 1 or cols[-1] == ink.shape[1] - 1:
        return False  # nothing drawn, or something reaches the margin's edge
    pad = int(round(pad_inches * dpi))
    y0, y1 = max(rows[0] - pad, 0), min(rows[-1] + 1 + pad, ink.shape[0])
    x0, x1 = max(cols[0] - pad, 0), min(cols[-1] + 1 + pad, ink.shape[1])
    image = image[y0:y1, x0:x1]
    _write_png(target, image, dpi, pil_kwargs)
    return True


def _svg_one_draw(fig, target, *, bbox_inches=None, pad_inches=None, metadata=None, backend=None, **rest) -> bool:
    """Write ``fig`` as ``savefig(target, format="svg", bbox_inches="tight", metadata=metadata)`` would, with one
    draw: savefig draws the figure widened by :data:`MARGIN_INCHES` on every side (a box given to savefig, so it
    does not measure first), the artists' box is measured at the end of that draw with its own renderer (each text
    already measured), and the file's size and view box are set to it, ``pad_inches`` around.  The same picture as
    savefig's; its coordinates counted from the widened figure's corner.

    Only on the figure's own Agg canvas (the command line's figures), with no layout engine that acts at each
    draw and nothing else of savefig's asked, and where the box lies inside the margin.  Returns False, having
    written nothing, otherwise."""
    import re

    import matplotlib as mpl
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.layout_engine import PlaceHolderLayoutEngine
    from matplotlib.transforms import Bbox

    from snrgain.outputs.canvas import RememberingCanvas

    engine = fig.get_layout_engine()
    if (
        rest
        or bbox_inches != "tight"
        or type(fig.canvas) not in (FigureCanvasAgg, RememberingCanvas)
        or not (engine is None or isinstance(engine, PlaceHolderLayoutEngine))
    ):
        return False
    if pad_inches is None:
        pad_inches = mpl.rcParams["savefig.pad_inches"]
    m = MARGIN_INCHES
    w, h = fig.get_size_inches()
    boxes = []
    cid = fig.canvas.mpl_connect("draw_event", lambda event: boxes.append(fig.get_tightbbox(event.renderer)))
    buf = io.BytesIO()
    fig.set_layout_engine(None)  # a placeholder would make savefig draw once first
    try:
        with ticks_fixed(fig):
            fig.savefig(
                buf,
                format="svg",
                bbox_inches=Bbox.from_extents(-m, -m, w + m, h + m),
                metadata=metadata,
                backend=backend,
            )
    finally:
        fig.canvas.mpl_disconnect(cid)
        if engine is not None:
            fig.set_layout_engine(engine)
    if len(boxes) != 1:
        return False
    box = boxes[0]  # inches from the widened figure's lower left corner
    if box.x0 <= 0 or box.y0 <= 0 or box.x1 >= w + 2 * m or box.y1 >= h + 2 * m:
        return False  # something runs on past the margin: savefig's own measure
    box = box.padded(pad_inches)
    x0, x1 = max(box.x0, 0.0) * 72, min(box.x1, w + 2 * m) * 72  # points, the view box's (y from the top)
    top, bottom = (h + 2 * m - min(box.y1, h + 2 * m)) * 72, (h + 2 * m - max(box.y0, 0.0)) * 72
    text = buf.getvalue().decode("utf-8")
    header = re.compile(r'<svg([^>]*?) width="[^"]*" height="[^"]*" viewBox="[^"]*"')
    if len(header.findall(text, 0, 2000)) != 1:
        return False
    fmt = svg_number
    text = header.sub(
        lambda k: (
            f'<svg{k.group(1)} width="{fmt(x1 - x0)}pt" height="{fmt(bottom - top)}pt" '
            f'viewBox="{fmt(x0)} {fmt(top)} {fmt(x1 - x0)} {fmt(bottom - top)}"'
        ),
        text,
        count=1,
    )
    data = text.encode("utf-8")
    if hasattr(target, "write"):
        target.write(data)
    else:
        with open(target, "wb") as f:
            f.write(data)
    return True


@contextlib.contextmanager
def ticks_fixed(fig):
    """A context in which each plain axis of ``fig`` (a rectilinear, unscaled one, its ticks found by matplotlib's
    automatic locator and plain number formatter, with no offset) has its ticks and labels fixed to those the axis
    shows now: a draw asks each axis for its ticks as it draws them and again as it places the axis' label, the box
    measured after the draw (an SVG's, :func:`_svg_one_draw`) once more, every time finding the tick positions and
    formatting their labels anew.  The same ticks, labels and picture (the view limits do not change in a draw of
    such axes); each axis' locator and formatter as they were after."""
    from matplotlib.ticker import AutoLocator, FixedFormatter, FixedLocator, MaxNLocator, ScalarFormatter

    kept = []
    try:
        for ax in fig.axes:
            if ax.name != "rectilinear" or ax.get_aspect() != "auto" or ax.get_label() == "<colorbar>":
                continue  # polar axes, equal-aspect ones (a draw may move their limits), colour bars: as they are
            for axis in (ax.xaxis, ax.yaxis):
                locator, formatter = axis.get_major_locator(), axis.get_major_formatter()
                if (
                    axis.get_scale() != "linear"
                    or type(locator) not in (AutoLocator, MaxNLocator)
                    or type(formatter) is not ScalarFormatter
                ):
                    continue  # (an axis sharing another's ticks finds them fixed already: they are one object)
                locs = axis.get_majorticklocs()
                labels = formatter.format_ticks(locs)
                if formatter.get_offset():
                    continue  # an offset or exponent written beside the axis: found at the draw as it is
                kept.append((axis, locator, formatter))
                axis.set_major_locator(FixedLocator(locs))
                axis.set_major_formatter(FixedFormatter(labels))
        yield
    finally:
        for axis, locator, formatter in reversed(kept):
            axis.set_major_locator(locator)
            axis.set_major_formatter(formatter)


def svg_number(x: float) -> str:
    """A number as the SVG writer writes its sizes and view box: fixed point, six decimals, trailing zeros and a
    bare point dropped (``72.5``, ``432``)."""
    return f"{x:f}".rstrip("0").rstrip(".")


def _write_png(target, rgba, dpi: float, pil_kwargs: dict | None) -> None:
    """An RGBA image (rows from the top) as PNG with matplotlib's Software note and the dpi, as RGB where every
    pixel is opaque (the same picture, a quarter less to compress).

    With no PNG keyword but ``compress_level`` the file is written here (:func:`png_bytes`: rows unfiltered, one
    zlib stream at that level), else by Pillow with ``pil_kwargs``.  Pillow tries every row filter on every row,
    three quarters of its time on a figure; a figure's flat colours pack as well without (files 9 % smaller
    than Pillow's at the same level on the realistic site's figures, in a third of the time)."""
    import matplotlib as mpl
    import numpy as np

    kw = dict(pil_kwargs or {})
    mode = "RGB" if rgba[..., 3].min() == 255 else "RGBA"
    software = f"Matplotlib version{mpl.__version__}, https://matplotlib.org/"
    if set(kw) <= {"compress_level"}:
        data = png_bytes(
            rgba[..., :3] if mode == "RGB" else rgba, dpi, {"Software": software}, kw.get("compress_level", 6)
        )
        if hasattr(target, "write"):
            target.write(data)
        else:
            with open(target, "wb") as f:
                f.write(data)
        return
    from PIL import Image, PngImagePlugin

    if "pnginfo" not in kw:
        kw["pnginfo"] = info = PngImagePlugin.PngInfo()
        info.add_text("Software", software)
    pixels = np.ascontiguousarray(rgba[..., :3] if mode == "RGB" else rgba)
    Image.fromarray(pixels, mode).save(target, format="png", dpi=(dpi, dpi), **kw)


def png_bytes(pixels, dpi: float, text: dict[str, str], level: int = 6) -> bytes:
    """A PNG file of 8-bit RGB or RGBA ``pixels`` (rows from the top; shape (height, width, 3 or 4)), as the PNG
    standard lays it out (W3C, Portable Network Graphics (PNG) Specification, 2nd ed. = ISO/IEC 15948:2004):
    the signature, IHDR, pHYs (``dpi`` as pixels per metre, rounded as Pillow rounds it), a tEXt chunk per item of
    ``text`` (Latin-1), the rows each with filter type 0 (none) in one zlib stream at ``level`` in one IDAT,
    IEND."""
    import struct
    import zlib

    import numpy as np

    h, w, c = pixels.shape
    if pixels.dtype != np.uint8 or c not in (3, 4):
        raise ValueError(f"pixels: 8-bit RGB or RGBA rows expected; got {pixels.dtype} with {c} channels")
    rows = np.empty((h, 1 + w * c), dtype=np.uint8)
    rows[:, 0] = 0  # filter type 0 on every row
    rows[:, 1:].reshape(h, w, c)[...] = pixels  # one strided copy (reshaping a cut image first would copy it twice)

    def chunk(kind: bytes, data: bytes) -> bytes:
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data))

    ppm = int(dpi / 0.0254 + 0.5)
    parts = [
        b"\x89PNG\r\n\x1a\n",
        chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, 2 if c == 3 else 6, 0, 0, 0)),
        chunk(b"pHYs", struct.pack(">IIB", ppm, ppm, 1)),
        *(chunk(b"tEXt", k.encode("latin-1") + b"\0" + v.encode("latin-1")) for k, v in text.items()),
        chunk(b"IDAT", zlib.compress(rows, level)),
        chunk(b"IEND", b""),
    ]
    return b"".join(parts)


def tight_box(fig, fmt: str, dpi: float | str | None = None, pad: float | None = None):
    """The box (a Bbox in inches) that ``savefig(bbox_inches="tight", dpi=dpi, pad_inches=pad)`` cuts the figure
    to, for "png" or "svg".

    savefig finds it by drawing the whole figure with its output turned off, so that each artist stands where a
    draw puts it, and then asking the artists for their extent; then it draws the figure again for the file.  The
    extent alone places what it measures (``Axes.get_tightbbox`` applies fixed aspect ratios and axes locators
    itself), so here it is asked directly of a renderer like savefig's (Agg at the file's dpi; for SVG, which
    measures text its own way, an SVG renderer at 72 units per inch): the same box to the bit, and the same file
    (tested), for about a third of the cost of that draw.
    """
    import matplotlib as mpl

    if pad is None:
        pad = mpl.rcParams["savefig.pad_inches"]
    if dpi is None:
        dpi = mpl.rcParams["savefig.dpi"]
    if dpi == "figure":
        dpi = fig.dpi
    old = fig.dpi
    try:
        if fmt == "svg":
            from matplotlib.backends.backend_svg import RendererSVG

            fig.dpi = 72  # as the SVG writer sets it: one unit a point
            w, h = fig.get_size_inches() * 72
            renderer = RendererSVG(w, h, io.StringIO(), image_dpi=old)
        else:
            from matplotlib.backends.backend_agg import RendererAgg

            fig.dpi = dpi
            renderer = RendererAgg(*fig.bbox.size, dpi)
        return fig.get_tightbbox(renderer).padded(pad)
    finally:
        fig.dpi = old


def warm_up(fmt: str = "png", modules: Sequence[str] = (), *, draw: bool = True) -> None:
    """Import matplotlib, its writer for ``fmt`` and ``modules``, and (``draw``) draw a small figure once, so the
    fonts are found and the first-use work done before the real figures (and before workers fork: each inherits
    it)."""
    import importlib

    import matplotlib.figure  # noqa: F401

    import snrgain.outputs.canvas  # noqa: F401  (the Agg and SVG writers)

    for name in modules:
        importlib.import_module(name)
    if draw:
        warm_up_figure(fmt)


def warm_up_figure(fmt: str = "png") -> None:
    """Draw a small figure once (:func:`warm_up`): the fonts found, the writer's first-use work done."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(2.0, 1.5))
    ax = fig.add_subplot()
    ax.plot([0, 1], [0, 1], label="0.5 dB")
    ax.set_title("warm-up", fontsize=10)
    ax.legend(fontsize=8)
    fig.tight_layout()
    figure_bytes(fig, fmt, dpi=72, bbox_inches="tight")


def _warmed(fmt: str) -> bool:
    """:func:`warm_up_figure` in the figures' helper; True (done, or failed: only time lost)."""
    try:
        warm_up_figure(fmt)
    except Exception:
        pass
    return True


def _drawing_worker_start(parent: int) -> None:
    """:func:`worker_start`, and the worker set to draw as :func:`drawing_settings` draws."""
    worker_start(parent)
    _drawing_process()


def _run(index: int) -> bytes:
    return job_bytes(_JOBS[index], keep=_KEEP)


_KEEP = False
"""Whether the current drawing keeps its figures (:func:`job_bytes`), read by forked workers."""

FIGURES_KIND = "figure"
"""The kind of the persistent cache's figure entries (noisemodels.skycache)."""

ENV_NO_FIGURES = "SNRGAIN_NO_FIGURE_CACHE"
"""Set to anything but "" or "0": every figure drawn afresh, none kept (the sky's cache stays; SNRGAIN_NO_CACHE
turns off both)."""

FIGURES_VERSION = 1
"""Part of every figure entry's key: bumped when what a figure's bytes depend on changes beyond the code digested."""


def job_bytes(job: tuple[Callable, str, dict], *, keep: bool = False) -> bytes:
    """The bytes of one job (a function that makes the figure, "png" or "svg", savefig's keywords).

    With ``keep`` (the command line's figures) the bytes are kept in the persistent cache (noisemodels.skycache,
    with its opt-out, size bound and safe writes) and read back when a later run draws the same figure from the
    same data: a job made as ``partial(figure function, data, **keywords)``, keyed by the function, a digest of
    the data and the keywords as pickled, the format and savefig's keywords, matplotlib's version and settings in
    force, the font they find, and a digest of the packages' sources (:func:`_figure_key`).  An edit-and-run loop
    that leaves what a figure shows alone does not draw it again."""
    make, fmt, savefig = job
    key = _figure_key(job) if keep else None
    if key is not None:
        from noisemodels import skycache

        kept = skycache.load(FIGURES_KIND, key)
        if kept is not None and kept.dtype == "uint8" and kept.ndim == 1:
            return kept.tobytes()
    data = figure_bytes(make(), fmt, **savefig)
    if key is not None:
        import numpy as np

        skycache.store(FIGURES_KIND, key, np.frombuffer(data, dtype=np.uint8))
    return data


_DIGESTS = Memo(16)
"""(data, digest) by id(data): the data a drawing's jobs share (the results), pickled and digested once."""


def _figure_key(job) -> dict | None:
    """The persistent cache's key of a job (:func:`job_bytes`), or None where the job is not a figure function's
    partial of one argument, the cache is off, or its data do not pickle."""
    from noisemodels import skycache

    make, fmt, savefig = job
    if isinstance(make, partial) and make.func is _made:  # a figure handed ahead, made in place of its job: its own
        make = make.args[0]
    off = os.environ.get(ENV_NO_FIGURES, "") not in ("", "0")
    if off or not skycache.enabled() or not isinstance(make, partial) or len(make.args) != 1:
        return None
    fn = make.func
    try:
        data = make.args[0]
        known = _DIGESTS.get(id(data), lambda: (data, _digest(data)))
        if known[0] is not data:  # other data at that address since: digested afresh
            _DIGESTS.clear()
            known = _DIGESTS.get(id(data), lambda: (data, _digest(data)))
        return {
            "version": FIGURES_VERSION,
            "figure": f"{fn.__module__}.{fn.__qualname__}",
            "data": known[1],
            "keywords": _digest(sorted(make.keywords.items())),
            "format": fmt,
            "savefig": _digest(sorted(savefig.items())),
            "drawing": _drawing_digest(),
        }
    except Exception:  # (pickling) a figure that is not kept is only drawn
        return None


def _digest(value) -> str:
    import hashlib

    return hashlib.sha256(pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL)).hexdigest()


def _drawing_digest() -> str:
    """A digest of what a figure's bytes depend on besides its job: matplotlib's version and settings in force (the
    user's own, with :data:`DRAWING_RC`), the font file they find, and the code (:func:`_code_digest`)."""
    import hashlib

    import matplotlib as mpl
    from matplotlib import font_manager

    settings = repr(sorted((k, repr(v)) for k, v in mpl.rcParams.items()))
    font = font_manager.findfont(font_manager.FontProperties())
    return hashlib.sha256(f"{mpl.__version__}|{settings}|{font}|{_code_digest()}".encode()).hexdigest()


@lru_cache(maxsize=1)
def _code_digest() -> str:
    """A digest of every source file of snrgain and noisemodels (noisemodels.skycache.code_digest, about 4 ms once a
    process): a figure reads the results through more code than its own (the labelled results, the sphere's
    interpolation), so any change to the packages is a miss."""
    from pathlib import Path

    import noisemodels
    import snrgain
    from noisemodels import skycache

    return skycache.code_digest(
        *(f for package in (snrgain, noisemodels) for f in sorted(Path(package.__file__).parent.rglob("*.py")))
    )


def draw_all(
    jobs: Sequence[tuple[Callable, str, dict]],
    *,
    done: Callable[[], None] | None = None,
    cost: Sequence[float] | None = None,
    keep: bool = False,
) -> list[bytes]:
    """The bytes of each job, in order: a job is (a function that makes the figure, "png" or "svg", savefig's
    keywords).  ``done()`` is called as each figure is finished.  ``cost``: each job's rough relative drawing time;
    the costliest are drawn first.  ``keep``: the figures kept in, and read back from, the persistent cache
    (:func:`job_bytes`).

    With more than one process to draw with (:func:`workers`), this process draws too: it forks one worker fewer
    and takes the next job from the same list as they do (a thread of it hands each worker its next job as the
    last comes back), so every process keeps drawing until the list is empty and they finish together; this one
    keeps what it has loaded (fonts, measured texts), which a forked worker loads again."""
    global _JOBS, _KEEP
    from snrgain.errors import stop_if_asked

    n = workers(len(jobs))
    out: list[bytes] = []
    if n <= 1:
        with drawing_settings():
            for job in jobs:
                out.append(job_bytes(job, keep=keep))
                if done:
                    done()
                stop_if_asked()
        return out
    import threading
    from concurrent.futures import ProcessPoolExecutor

    pending = sorted(range(len(jobs)), key=lambda k: -cost[k]) if cost is not None else list(range(len(jobs)))
    lock = threading.Lock()
    drawn: dict[int, bytes] = {}
    failed: list[BaseException] = []

    def take() -> int | None:
        with lock:
            return pending.pop(0) if pending and not failed else None

    def finished(k: int, data: bytes) -> None:
        with lock:
            drawn[k] = data
            if done:
                done()

    def feed(k, future) -> None:  # one worker's jobs, one after the other, in a thread of this process
        try:
            while k is not None:
                finished(k, future.result())
                k = take()
                if k is not None:
                    future = pool.submit(_run, k)
        except BaseException as exc:  # raised by this process below
            with lock:
                failed.append(exc)

    _JOBS, _KEEP = jobs, keep
    pool = ProcessPoolExecutor(
        max_workers=n - 1,
        mp_context=multiprocessing.get_context("fork"),
        initializer=_drawing_worker_start,
        initargs=(os.getpid(),),
    )
    try:
        # The workers' first jobs handed out here: the pool forks its workers at the first, before any thread of ours
        firsts = [(k, pool.submit(_run, k)) for k in (take() for _ in range(n - 1)) if k is not None]
        feeders = [threading.Thread(target=feed, args=first, daemon=True) for first in firsts]
        for t in feeders:
            t.start()
        with drawing_settings():
            while (k := take()) is not None:
                finished(k, job_bytes(jobs[k], keep=keep))
                stop_if_asked()  # Ctrl-C: the figures not started are dropped (below), the command stops cleanly
        for t in feeders:
            while t.is_alive():
                t.join(0.05)
                stop_if_asked()
        if failed:
            raise failed[0]
        return [drawn[k] for k in range(len(jobs))]
    finally:
        with lock:
            pending.clear()
        pool.shutdown(wait=True, cancel_futures=True)
        _JOBS, _KEEP = (), False


class Drawer:
    """Draws figures (:func:`draw_all`) in a helper process started now, before the results exist.

    Use it around the evaluation::

        with Drawer("svg", modules=["snrgain.outputs.report"]) as drawer:
            results = evaluate(...)
            drawn = drawer.draw(jobs, done=step)

    The helper imports matplotlib and ``modules`` and loads the fonts (:func:`warm_up`) while this process works;
    :meth:`draw` sends it the jobs, pickled once (the results they share are written once), and it draws them with
    its own forked workers, reporting each figure done.  Leaving the ``with`` block ends the helper, also when the
    evaluation failed or was stopped.  Where the figures would be drawn in this process anyway (one core, no
    fork, ``SNRGAIN_WORKERS=1``) no helper is started, and where the jobs cannot be pickled they are drawn here.

    A figure that needs no results (the site plan, from the scenario) can be handed over before them
    (:meth:`ahead`): the helper draws it while this process evaluates, and :meth:`draw` takes its bytes for the job
    named so (``ahead={index: key}``), which is drawn as any other where the early one is missing or failed.
    """

    def __init__(self, fmt: str = "png", *, modules: Sequence[str] = (), keep: bool = False):
        self._keep = keep  # the figures kept in the persistent cache and read back from it (job_bytes)
        self._proc = None
        self._conn = None
        self._outbox = None  # what is to be sent, in order, by the sending thread (:meth:`_post`)
        self._sender = None
        if workers(2) < 2:
            return
        ctx = multiprocessing.get_context("fork")
        self._conn, child = ctx.Pipe()
        # Not a daemon: its own workers are its children, which multiprocessing refuses a daemon.
        self._proc = ctx.Process(
            target=_helper, args=(child, os.getpid(), fmt, tuple(modules), keep), name="snrgain-figures", daemon=False
        )
        self._proc.start()
        child.close()

    def __enter__(self) -> Drawer:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def close(self) -> None:
        """End the helper (at once: it holds nothing that needs finishing)."""
        proc, self._proc = self._proc, None
        if proc is None:
            return
        if self._outbox is not None:
            self._outbox.put(None)  # the sending thread ends (at once where it waits, else when the helper is gone)
        if proc.is_alive():
            proc.terminate()
        proc.join()
        if self._sender is not None:
            self._sender.join(timeout=5.0)
        self._conn.close()

    @property
    def active(self) -> bool:
        """Whether a helper draws (:meth:`ahead` and :meth:`prepare` hand it work); False where the figures are
        drawn in this process."""
        return self._proc is not None

    def ahead(self, key: str, job: tuple[Callable, str, dict], *more: tuple[str, tuple[Callable, str, dict]]) -> None:
        """Hand the helper a job to draw before the results, under ``key``, and ``more`` (key, job) pairs after it,
        all in one message (what they share, such as the results' preview, pickled once): drawn after those handed
        before, in order.  Nothing where there is no helper, or where the jobs cannot be pickled (:meth:`draw` then
        draws them with the others).  What is not drawn when the jobs come is drawn with them, side by side."""
        self._send(("ahead", [(key, job), *more]))

    def prepare(self, fn: Callable, *args) -> None:
        """Have the helper call ``fn(*args)`` once it is ready, before the results (to make what every figure of the
        kind needs: :func:`snrgain.outputs.plots.blank_steps`); its workers inherit what it made.  Where the call
        gives an iterator, the helper takes its steps one at a time while nothing else waits for it (a figure handed
        :meth:`ahead` is drawn first) and stops when the jobs come: the preparation never holds up the drawing.
        Nothing where there is no helper or where the call cannot be pickled; a call that fails is let go."""
        self._send(("prepare", fn, args))

    def _send(self, message: tuple) -> None:
        """Send the helper one message before the results; nothing where there is no helper or where the message
        cannot be pickled (:meth:`draw` then does the work itself)."""
        if self._proc is None:
            return
        try:
            payload = pickle.dumps(message, protocol=pickle.HIGHEST_PROTOCOL)
        except (pickle.PicklingError, TypeError, AttributeError):
            return
        self._post(payload)

    def _post(self, payload: bytes) -> None:
        """Have ``payload`` sent to the helper, after what was posted before, by a thread of this process: the
        helper reads a message only between two pieces of its work (a figure, a step), and a message larger than
        the pipe holds (a sky, a few patterns' cuts) would otherwise hold this process' evaluation up until then."""
        if self._sender is None:
            import queue
            import threading

            self._outbox = queue.SimpleQueue()
            self._sender = threading.Thread(
                target=_send_all, args=(self._conn, self._outbox), name="snrgain-figures-send", daemon=True
            )
            self._sender.start()
        self._outbox.put(payload)

    def draw(
        self,
        jobs: Sequence[tuple[Callable, str, dict]],
        *,
        done: Callable[[], None] | None = None,
        cost: Sequence[float] | None = None,
        ahead: dict[int, str] | None = None,
    ) -> list[bytes]:
        """:func:`draw_all` of the jobs, in the helper if there is one; ``ahead``: the jobs (by index) that the
        helper was handed before (:meth:`ahead`, by key), whose bytes it has drawn by now."""
        from snrgain.errors import stop_if_asked

        if self._proc is None:
            return draw_all(jobs, done=done, cost=cost, keep=self._keep)
        try:
            payload = pickle.dumps(("jobs", list(jobs), cost, dict(ahead or {})), protocol=pickle.HIGHEST_PROTOCOL)
        except (pickle.PicklingError, TypeError, AttributeError):  # e.g. a figure function made in a notebook
            self.close()
            return draw_all(jobs, done=done, cost=cost, keep=self._keep)
        try:
            self._post(payload)  # after every message posted before it
            while True:
                kind, value = self._conn.recv()
                if kind == "done":
                    if done:
                        done()
                    stop_if_asked()
                elif kind == "drawn":
                    return value
                else:
                    raise value
        except (EOFError, BrokenPipeError, ConnectionResetError):  # the helper died (killed, out of memory)
            self.close()
            return draw_all(jobs, done=done, cost=cost, keep=self._keep)


def _made(early: Callable, make: Callable):
    """The figure ``early()`` makes (one handed ahead), else, where that fails, the one ``make()`` makes."""
    try:
        return early()
    except Exception:
        return make()


def _send_all(conn, outbox) -> None:
    """The sending thread of :class:`Drawer`: each payload of ``outbox`` sent in turn, until None comes or the
    helper is gone (its end of the pipe closed: :meth:`Drawer.draw` finds that when it reads)."""
    while (payload := outbox.get()) is not None:
        try:
            conn.send_bytes(payload)
        except (BrokenPipeError, ConnectionResetError, OSError):
            return


def _helper(conn, parent: int, fmt: str, modules: tuple[str, ...], keep: bool = False) -> None:
    """The helper process of :class:`Drawer`: warm up, draw what is handed ahead as it comes, wait for the jobs,
    draw them (those drawn ahead taken as they are), send the bytes back."""
    import gc

    worker_start(parent)
    try:
        warm_up(fmt, modules, draw=False)  # the figure drawn ahead warms up instead, else the one below
    except Exception:  # any real problem comes back when the figures are drawn
        pass
    warm = False
    # What is loaded now (matplotlib, the fonts) and later the jobs stay for good: out of the cyclic collector's
    # reach, its passes while the figures are drawn walk only the figures' own objects (a full pass over
    # matplotlib's and the results' objects took 50-90 ms in a worker).
    gc.freeze()
    _drawing_process()  # the helper's own settings, for what it draws ahead
    early: dict[str, bytes] = {}
    queued: list = []  # (key, job) handed ahead and not drawn yet, in the order they came
    steps: list = []  # preparations given as iterators, taken a step at a time while no message waits
    message = None
    while message is None:
        try:
            # every message that waits is read before the next piece of work; with no work, the next one awaited
            while conn.poll() or not (queued or steps or not warm):
                got = pickle.loads(conn.recv_bytes())
                if got[0] == "prepare":
                    try:
                        made = got[1](*got[2])
                        if isinstance(made, Iterator):
                            steps.append(made)
                    except Exception:  # only time lost: the figures make their own
                        pass
                elif got[0] == "ahead":
                    queued.extend(got[1])
                else:  # the jobs: what was handed ahead and is not drawn yet is drawn with them
                    message = got
                    break
        except (EOFError, OSError):  # the command ended without drawing
            return
        if message is not None:
            break
        if queued:  # a figure handed ahead (the first warms up too)
            key, job = queued.pop(0)
            try:
                early[key] = job_bytes(job, keep=keep)
                warm = True
            except Exception:  # drawn again with the others, where its error is the command's
                pass
        elif not warm:  # the work each figure would do first, done once for all
            warm = _warmed(fmt)
        else:
            try:
                next(steps[0])
            except Exception:  # done (StopIteration), or failed: only time lost, the figures make their own
                steps.pop(0)
    if not warm:
        _warmed(fmt)
    gc.freeze()  # the results, inherited by the workers
    try:
        _, jobs, cost, ahead = message
        ready = {k: early[key] for k, key in ahead.items() if key in early}
        rest = [k for k in range(len(jobs)) if k not in ready]
        for _ in ready:
            conn.send(("done", None))
        # Handed ahead and not drawn yet: made now in place of the job named for it (that one where it fails)
        waiting = {key: make for key, (make, _, _) in queued}
        drawn = draw_all(
            [
                (partial(_made, waiting[ahead[k]], jobs[k][0]), *jobs[k][1:]) if ahead.get(k) in waiting else jobs[k]
                for k in rest
            ],
            done=lambda: conn.send(("done", None)),
            cost=None if cost is None else [cost[k] for k in rest],
            keep=keep,
        )
        ready.update(zip(rest, drawn))
        out = [ready[k] for k in range(len(jobs))]
    except BaseException as exc:  # the command raises it as its own
        try:
            conn.send(("failed", exc))
        except Exception:
            conn.send(("failed", RuntimeError(f"drawing the figures: {type(exc).__name__}: {exc}")))
        return
    conn.send(("drawn", out))
