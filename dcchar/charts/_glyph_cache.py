"""Screen text of the live chart drawn from glyphs rasterized once and kept.

A live update redraws the operating-point labels on every slider step, and matplotlib's Agg
renderer lays out and rasterizes every glyph of every line again each time (about 90 % of the
cost of a label box). While the live chart draws its moving artists, the renderer's
``draw_text`` is replaced here by one that keeps

- the layout of each line string (glyph indices and pen positions, from the font's own layout);
- the coverage bitmap of each glyph, per font, size and pen position within the pixel.

Its ``get_text_width_height_descent`` is replaced too. The labels' numbers change on every step,
but where a font has tabular figures (every digit one advance, no kerning next to a digit: as in
DejaVu Sans, checked for each character and pair of the line), a line measures and lays out as
the same line with its digits written as 0; only the glyphs of the digits differ. The height and
descent of a line are those of its characters' boxes put together, as FreeType forms them.

The origin of each line is rounded to a quarter pixel (the line moves at most 1/8 px from where
matplotlib would put it; its glyphs keep their places relative to it), so that the same few pen
positions recur from frame to frame. A whole line is then blended onto the canvas in one call,
with the colour, alpha and clip of the text's graphics context, giving the pixels the Agg
renderer gives for a line at that origin. Math text, rotated or aliased text, text with font
features or a language set, and renderers other than Agg are passed on to the renderer
unchanged. Saved figures never come here.
"""

from __future__ import annotations

import contextlib
import functools
import re

import numpy as np

__all__ = ["GlyphCache", "cached_glyphs", "zeroed_digits"]

_QUARTER = 16  # a quarter pixel in FreeType's 26.6 fixed point
_IDENTITY = np.array([[0x10000, 0], [0, 0x10000]])
_DIGITS = re.compile("[0-9]")


def zeroed_digits(text: str, width):
    """``text`` with its digits written as 0, when that moves none of its glyphs; else None.

    Parameters
    ----------
    text : str
    width : callable
        Width of a string in the font at hand (any unit).

    Returns
    -------
    str or None
        None when ``text`` has no digits, or when a digit differs from 0 in width or a pair of
        neighbours holding a digit differs from that pair with the digit as 0 (kerning).
    """
    key = _DIGITS.sub("0", text)
    if key == text:
        return None
    zero = width("0")
    for i, (c, k) in enumerate(zip(text, key)):
        if c == k:
            continue
        if width(c) != zero:
            return None
        for j in (i - 1, i):
            if 0 <= j < len(text) - 1 and width(text[j:j + 2]) != width(key[j:j + 2]):
                return None
    return key


class GlyphCache:
    """Line layouts, measures and glyph coverage bitmaps kept from frame to frame (see the
    module notes).

    Parameters
    ----------
    max_lines : int
        Line layouts and measures kept (each table is emptied when full).
    max_glyphs : int
        Glyph bitmaps kept (emptied when full).

    Attributes
    ----------
    stats : dict
        Counts of lines drawn, and of layouts, measures and glyphs made (cache misses).
    """

    def __init__(self, max_lines: int = 4096, max_glyphs: int = 8192):
        self.max_lines, self.max_glyphs = int(max_lines), int(max_glyphs)
        self._fonts: dict = {}
        self._sizes: dict = {}
        self._zeros: dict = {}
        self._layouts: dict = {}
        self._glyphs: dict = {}  # (font id, size, face) -> {(glyph index, fx, fy): bitmap, "font": font}
        self._made = 0
        self.stats = {"lines": 0, "layouts": 0, "measures": 0, "glyphs": 0, "passed": 0}

    def clear(self):
        """Forget everything kept."""
        for table in (self._fonts, self._sizes, self._zeros, self._layouts, self._glyphs):
            table.clear()

    def _put(self, table, key, value, most):
        if len(table) >= most:
            table.clear()
        table[key] = value
        return value

    # ------------------------------------------------------------------ pieces
    # A face is (hash of the font properties, dpi, hinting flags): matplotlib itself holds font
    # properties with equal hashes for equal.
    @staticmethod
    def _face(renderer, prop):
        from matplotlib.backends.backend_agg import get_hinting_flag

        return hash(prop), renderer.dpi, get_hinting_flag()

    def _measure(self, renderer, prop, face, text):
        """The renderer's own (width, height, descent) [px] of ``text``."""
        wad = self._sizes.get((face, text))
        if wad is None:
            wad = type(renderer).get_text_width_height_descent(renderer, text, prop, False)
            self._put(self._sizes, (face, text), wad, self.max_lines)
            self.stats["measures"] += 1
        return wad

    def _zeroed(self, renderer, prop, face, text):
        try:
            return self._zeros[(face, text)]
        except KeyError:
            key = zeroed_digits(text, lambda t: self._measure(renderer, prop, face, t)[0])
            return self._put(self._zeros, (face, text), key, self.max_lines)

    def text_metrics(self, renderer, text, prop, ismath):
        """(width, height, descent) [px] as ``RendererAgg.get_text_width_height_descent`` gives
        them, or None to leave the measurement to the renderer (math text, no digits)."""
        if ismath:
            return None
        face = self._face(renderer, prop)
        key = self._zeroed(renderer, prop, face, text)
        if key is None:
            return None
        width = self._measure(renderer, prop, face, key)[0]
        boxes = [self._measure(renderer, prop, face, c) for c in set(text)]
        descent = max(d for _, _, d in boxes)
        return width, max(h - d for _, h, d in boxes) + descent, descent

    def _layout(self, renderer, prop, face, text):
        """Glyphs of a line: (font, glyph index, x, y) [1/64 px from the line's origin, as the
        renderer rounds them]."""
        items = self._layouts.get((face, text))
        if items is not None:
            return items
        key = self._zeroed(renderer, prop, face, text)
        if key is not None:  # the places of the zeroed line, the glyphs of this one
            zero = self._layout(renderer, prop, face, key)
            if len(zero) == len(text):
                items = tuple((ft, ft.get_char_index(ord(c)) if c != k else index, x, y)
                              for (ft, index, x, y), c, k in zip(zero, text, key))
        if items is None:
            font = self._fonts.get(face)
            if font is None:
                font = self._put(self._fonts, face, renderer._prepare_font(prop), 64)
            font.set_size(prop.get_size_in_points(), renderer.dpi)
            items = tuple((it.ft_object, it.glyph_index, round(0x40 * it.x), round(0x40 * it.y))
                          for it in font._layout(text, flags=face[2]))
            self.stats["layouts"] += 1
        return self._put(self._layouts, (face, text), items, self.max_lines)

    def _glyph(self, ft, size, face, table, index, fx, fy):
        """(fraction of the background let through, left, top, rows, columns [px]) of a glyph
        drawn with its pen at (fx, fy) [1/64 px] in the pixel at the origin; kept in ``table``."""
        from matplotlib.ft2font import RenderMode

        ft.set_size(size, face[1])
        ft._set_transform(_IDENTITY, [fx, fy])
        bitmap = ft._render_glyph(index, face[2], RenderMode.NORMAL)
        keep = 1.0 - np.asarray(bitmap.buffer, dtype=np.float32) / 255.0
        self.stats["glyphs"] += 1
        self._made += 1
        if self._made > self.max_glyphs:  # start again (the table at hand is dropped after this line)
            self._glyphs.clear()
            self._made = 0
        table[(index, fx, fy)] = g = (keep, int(bitmap.left), int(bitmap.top), *keep.shape)
        return g

    # ------------------------------------------------------------------ drawing
    def draw_text(self, renderer, gc, x, y, s, prop, angle, ismath=False, mtext=None) -> bool:
        """Draw one line as ``RendererAgg.draw_text`` would; False when it is left to the renderer
        (math text, a rotation, aliased text, font features or a language)."""
        if ismath or angle % 360 or not gc.get_antialiased() or not s:
            return False
        if mtext is not None and (getattr(mtext, "get_fontfeatures", lambda: None)()
                                  or getattr(mtext, "get_language", lambda: None)()):
            return False
        face = self._face(renderer, prop)
        items = self._layout(renderer, prop, face, s)
        size, height = prop.get_size_in_points(), renderer.height
        # the line's origin on a quarter pixel (26.6 fixed point, FreeType's y upwards); its glyphs
        # at the pen positions of the layout from there, as matplotlib places them
        ox = (round(0x40 * x) + _QUARTER // 2) // _QUARTER * _QUARTER
        oy = (round(0x40 * (height - y)) + _QUARTER // 2) // _QUARTER * _QUARTER
        placed = []
        tables = self._glyphs
        for ft, index, dx, dy in items:
            px, py = ox + dx, oy + dy
            fx, fy = px & 63, py & 63
            # one table of bitmaps per font object (kept in the key with its id) and size
            table = tables.get((id(ft), size, face))
            if table is None:
                table = tables[(id(ft), size, face)] = {"font": ft}
            g = table.get((index, fx, fy)) or self._glyph(ft, size, face, table, index, fx, fy)
            if g[3] and g[4]:
                placed.append((g[0], (px >> 6) + g[1], (py >> 6) + g[2], g[3], g[4]))
        if not placed:
            return True
        x0 = min(p[1] for p in placed)
        x1 = max(p[1] + p[4] for p in placed)
        t0 = max(p[2] for p in placed)
        t1 = min(p[2] - p[3] for p in placed)
        # overlapping glyphs blend as Agg blends them one after the other: the background left
        # is the product of what each lets through
        through = np.ones((t0 - t1, x1 - x0), dtype=np.float32)
        for keep, left, top, rows, cols in placed:
            r, c = t0 - top, left - x0
            through[r:r + rows, c:c + cols] *= keep
        cover = np.rint(255.0 * (1.0 - through)).astype(np.uint8)
        renderer._renderer.draw_text_image(cover, x0, int(height) - t0 + cover.shape[0], 0, gc)
        self.stats["lines"] += 1
        return True


@functools.lru_cache(maxsize=1)
def _font_engine_supported() -> bool:
    """True where matplotlib's FreeType wrapper has the layout and glyph calls used here (they are
    internal to matplotlib; where a version lacks one, text is left to the renderer)."""
    try:
        from matplotlib.ft2font import FT2Font, RenderMode  # noqa: F401
    except ImportError:
        return False
    return all(hasattr(FT2Font, name) for name in ("_layout", "_render_glyph", "_set_transform", "get_char_index"))


@contextlib.contextmanager
def cached_glyphs(renderer, cache: GlyphCache):
    """While active, ``renderer.draw_text`` and ``renderer.get_text_width_height_descent`` go
    through ``cache`` (Agg renderers only, with a matplotlib whose font engine has the calls used
    here; any other renderer is left as it is)."""
    if not (_font_engine_supported() and hasattr(renderer, "_renderer") and hasattr(renderer, "_prepare_font")
            and hasattr(renderer._renderer, "draw_text_image")):
        yield renderer
        return
    kind = type(renderer)

    def draw_text(gc, x, y, s, prop, angle, ismath=False, mtext=None):
        if not cache.draw_text(renderer, gc, x, y, s, prop, angle, ismath, mtext):
            cache.stats["passed"] += 1
            kind.draw_text(renderer, gc, x, y, s, prop, angle, ismath=ismath, mtext=mtext)

    def get_text_width_height_descent(s, prop, ismath):
        wad = cache.text_metrics(renderer, s, prop, ismath)
        return kind.get_text_width_height_descent(renderer, s, prop, ismath) if wad is None else wad

    renderer.draw_text = draw_text
    renderer.get_text_width_height_descent = get_text_width_height_descent
    try:
        yield renderer
    finally:
        del renderer.draw_text, renderer.get_text_width_height_descent
