"""Colour maps and an 8-bit palette PNG writer, standard library and numpy only.

A radargram reaches the browser as an indexed-colour PNG: the array is scaled to 256 levels
(:func:`scale_to_index`), the colour map travels as the PNG palette, and the picture is
written by :func:`encode_palette_png` with ``zlib`` (no imaging library). Image rows are
PNG rows, so ``index[i_sample, i_trace]`` puts early times at the top.
"""

from __future__ import annotations

import binascii
import math
import struct
import zlib
from types import MappingProxyType

import numpy as np

from snowprobe_widgets._validate import check_choice, check_range

#: Number of entries of every colour map (one per 8-bit index).
N_LEVELS: int = 256

#: The eight bytes that open every PNG file (PNG specification, section 5.2).
PNG_SIGNATURE: bytes = b"\x89PNG\r\n\x1a\n"


def _from_anchors(anchors_rgb: tuple[tuple[int, int, int], ...]) -> np.ndarray:
    """A 256 x 3 uint8 table by linear interpolation between evenly spaced anchor colours."""
    anchors = np.asarray(anchors_rgb, dtype=float)
    at = np.linspace(0.0, 1.0, anchors.shape[0])
    u = np.linspace(0.0, 1.0, N_LEVELS)
    table = np.stack([np.interp(u, at, anchors[:, c]) for c in range(3)], axis=1)
    out = np.rint(table).astype(np.uint8)
    out.setflags(write=False)
    return out


# Our own colour maps. "diverging" maps are meant for signed amplitude with zero in the
# middle entry; "sequential" maps for non-negative quantities such as envelopes.
_ANCHORS: dict[str, tuple[str, tuple[tuple[int, int, int], ...]]] = {
    # dark glacier blue -> pale ice -> off-white -> warm amber -> deep rust
    "frost_ember": ("diverging", ((14, 34, 86), (84, 146, 204), (240, 241, 236),
                                  (224, 140, 58), (108, 28, 18))),
    # charcoal -> snow white, for readers who prefer a grey section
    "slate_snow": ("diverging", ((12, 13, 16), (248, 248, 246))),
    # night -> violet -> rose -> apricot -> cream
    "alpenglow": ("sequential", ((10, 10, 28), (68, 38, 108), (188, 68, 92),
                                 (244, 168, 82), (252, 246, 222))),
    # forest floor -> moss -> pale lichen
    "lichen": ("sequential", ((18, 28, 24), (56, 108, 78), (168, 198, 118),
                              (246, 246, 214))),
}

#: Colour map name -> 256 x 3 uint8 table (read-only).
COLOUR_MAPS: MappingProxyType[str, np.ndarray] = MappingProxyType(
    {name: _from_anchors(anchors) for name, (_, anchors) in _ANCHORS.items()}
)

#: Colour map name -> ``"diverging"`` or ``"sequential"``.
COLOUR_MAP_KINDS: MappingProxyType[str, str] = MappingProxyType(
    {name: kind for name, (kind, _) in _ANCHORS.items()}
)


def colour_map(name: str) -> np.ndarray:
    """The 256 x 3 uint8 lookup table of the colour map ``name``.

    Raises
    ------
    ValueError
        If ``name`` is not one of :data:`COLOUR_MAPS`.
    """
    check_choice("colour_map", name, tuple(COLOUR_MAPS))
    return COLOUR_MAPS[name]


def scale_to_index(
    data: np.ndarray, vmin: float, vmax: float, *, nonfinite_index: int = 128
) -> np.ndarray:
    """Map values linearly onto the indices 0..255 of a colour map.

    Parameters
    ----------
    data : array_like
        Values of any shape (a radargram is ``data[i_sample, i_trace]``).
    vmin, vmax : float
        Values drawn with the first and last colour; values outside are clipped. With
        ``vmin == vmax`` values below get 0, above get 255 and equal ones the middle entry.
    nonfinite_index : int
        Index given to NaN and infinite values (the middle entry by default).

    Returns
    -------
    ndarray of uint8, same shape as ``data``
        ``round(255 * (data - vmin) / (vmax - vmin))`` clipped to [0, 255].

    Raises
    ------
    ValueError
        If ``vmin`` or ``vmax`` is not finite, ``vmax < vmin`` or ``nonfinite_index`` is
        outside [0, 255].
    """
    lo = check_range("vmin", vmin)
    hi = check_range("vmax", vmax, lo)
    fill = int(check_range("nonfinite_index", nonfinite_index, 0, 255))
    a = np.asarray(data)
    if not np.issubdtype(a.dtype, np.floating):
        a = a.astype(np.float64)
    if hi > lo:
        gain = (N_LEVELS - 1) / (hi - lo)
        if not math.isfinite(gain):  # a range so narrow that 255 / width overflows
            gain = np.finfo(np.float64).max
        with np.errstate(invalid="ignore", over="ignore"):
            u = (a - lo) * gain
            u += 0.5
            np.clip(u, 0.0, N_LEVELS - 1, out=u)
    else:
        u = np.where(a < lo, 0.0, np.where(a > hi, N_LEVELS - 1.0, 128.0))
    finite = np.isfinite(a)
    if not finite.all():
        u[~finite] = fill
    # astype truncates, which after the +0.5 above is rounding half up
    return u.astype(np.uint8)


def _chunk(kind: bytes, payload: bytes) -> bytes:
    crc = binascii.crc32(kind + payload) & 0xFFFFFFFF
    return struct.pack(">I", len(payload)) + kind + payload + struct.pack(">I", crc)


def encode_palette_png(
    index_uint8_2d: np.ndarray, palette_rgb: np.ndarray, *, compress_level: int = 6
) -> bytes:
    """Write an 8-bit indexed-colour PNG (colour type 3) from an index image and a palette.

    Parameters
    ----------
    index_uint8_2d : ndarray of uint8, shape (height, width)
        Palette index of each pixel; row 0 is the top row of the picture.
    palette_rgb : ndarray of uint8, shape (n_colours, 3)
        Palette, 1 <= n_colours <= 256; every index must be < n_colours.
    compress_level : int
        zlib level 0..9 (6 is zlib's own default).

    Returns
    -------
    bytes
        A PNG file: signature, IHDR, PLTE, one IDAT (filter type 0 on every row), IEND.

    Raises
    ------
    ValueError
        On a wrong shape or dtype, an empty image, a palette of the wrong size or an index
        that the palette does not cover.
    """
    idx = np.asarray(index_uint8_2d)
    pal = np.asarray(palette_rgb)
    if idx.ndim != 2 or idx.dtype != np.uint8:
        raise ValueError(
            f"index_uint8_2d must be a 2-D uint8 array, got shape {idx.shape} dtype {idx.dtype}"
        )
    height, width = idx.shape
    if height < 1 or width < 1:
        raise ValueError(f"index_uint8_2d shape {idx.shape} is empty; need at least 1 x 1")
    if pal.ndim != 2 or pal.shape[1] != 3 or not 1 <= pal.shape[0] <= N_LEVELS:
        raise ValueError(
            f"palette_rgb must have shape (n, 3) with 1 <= n <= 256, got {pal.shape}"
        )
    if pal.dtype != np.uint8:
        raise ValueError(f"palette_rgb must be uint8, got dtype {pal.dtype}")
    if pal.shape[0] < N_LEVELS:
        top = int(idx.max())
        if top >= pal.shape[0]:
            raise ValueError(
                f"index_uint8_2d holds index {top}, outside the palette's range "
                f"[0, {pal.shape[0] - 1}]"
            )
    level = int(check_range("compress_level", compress_level, 0, 9))
    raw = np.zeros((height, width + 1), dtype=np.uint8)  # column 0: filter type 0 (None)
    raw[:, 1:] = idx
    ihdr = struct.pack(">IIBBBBB", width, height, 8, 3, 0, 0, 0)
    return b"".join((
        PNG_SIGNATURE,
        _chunk(b"IHDR", ihdr),
        _chunk(b"PLTE", np.ascontiguousarray(pal).tobytes()),
        _chunk(b"IDAT", zlib.compress(raw.tobytes(), level)),
        _chunk(b"IEND", b""),
    ))


__all__ = [
    "COLOUR_MAPS",
    "COLOUR_MAP_KINDS",
    "N_LEVELS",
    "PNG_SIGNATURE",
    "colour_map",
    "encode_palette_png",
    "scale_to_index",
]
