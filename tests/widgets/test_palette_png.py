"""Tests of the colour maps, the 8-bit scaling and the palette PNG writer.

The PNG checks decode the bytes with a small decoder written here from the PNG
specification (W3C, Portable Network Graphics Specification, 2nd ed., 2003: sections 5.2
signature, 5.3 chunk layout and CRC, 11.2 IHDR/PLTE/IDAT/IEND, 9.2 filter type 0) and
compare pixels exactly: the format is lossless, so any difference is a bug.
"""

from __future__ import annotations

import struct
import zlib

import numpy as np
import pytest

from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    COLOUR_MAPS,
    PNG_SIGNATURE,
    colour_map,
    encode_palette_png,
    scale_to_index,
)


class PngError(Exception):
    """The bytes are not a valid 8-bit palette PNG."""


def decode_palette_png(png: bytes) -> tuple[np.ndarray, np.ndarray]:
    """Decode an 8-bit, non-interlaced, colour-type-3 PNG into (index image, palette)."""
    png = bytes(png)  # ipywidgets hands back a memoryview
    if png[:8] != b"\x89PNG\r\n\x1a\n":
        raise PngError("bad signature")
    pos, chunks = 8, []
    while pos < len(png):
        if pos + 8 > len(png):
            raise PngError("truncated chunk header")
        (length,) = struct.unpack(">I", png[pos:pos + 4])
        kind = png[pos + 4:pos + 8]
        payload = png[pos + 8:pos + 8 + length]
        (crc,) = struct.unpack(">I", png[pos + 8 + length:pos + 12 + length])
        if len(payload) != length:
            raise PngError("truncated chunk payload")
        if zlib.crc32(kind + payload) != crc:
            raise PngError(f"CRC mismatch in {kind!r}")
        chunks.append((kind, payload))
        pos += 12 + length
    kinds = [k for k, _ in chunks]
    if kinds[0] != b"IHDR" or kinds[-1] != b"IEND" or b"PLTE" not in kinds:
        raise PngError(f"chunk order {kinds}")
    if kinds.index(b"PLTE") > kinds.index(b"IDAT"):
        raise PngError("PLTE after IDAT")
    width, height, depth, ctype, comp, filt, interlace = struct.unpack(
        ">IIBBBBB", chunks[0][1])
    if (depth, ctype, comp, filt, interlace) != (8, 3, 0, 0, 0):
        raise PngError(f"header {(depth, ctype, comp, filt, interlace)}")
    plte = dict(chunks)[b"PLTE"]
    if len(plte) % 3:
        raise PngError("PLTE length not a multiple of 3")
    palette = np.frombuffer(plte, dtype=np.uint8).reshape(-1, 3)
    raw = zlib.decompress(b"".join(p for k, p in chunks if k == b"IDAT"))
    if len(raw) != height * (width + 1):
        raise PngError(f"{len(raw)} bytes of scanlines for {height} x {width}")
    rows = np.frombuffer(raw, dtype=np.uint8).reshape(height, width + 1)
    if np.any(rows[:, 0] != 0):
        raise PngError("filter type other than 0")
    image = rows[:, 1:].copy()
    if image.max() >= palette.shape[0]:
        raise PngError("index outside the palette")
    return image, palette


# --------------------------------------------------------------------------- PNG writer
@pytest.mark.parametrize("shape", [(1, 1), (256, 512), (3, 7), (512, 256)])
def test_png_round_trip_is_exact(shape: tuple[int, int]) -> None:
    rng = np.random.default_rng(7)
    index = rng.integers(0, 256, size=shape, dtype=np.uint8)
    pal = colour_map("frost_ember")
    png = encode_palette_png(index, pal)
    assert png[:8] == b"\x89PNG\r\n\x1a\n" == PNG_SIGNATURE
    got, got_pal = decode_palette_png(png)
    assert got.shape == shape
    np.testing.assert_array_equal(got, index)
    np.testing.assert_array_equal(got_pal, pal)


def test_png_row_zero_is_top_row_and_non_contiguous_input() -> None:
    index = np.zeros((4, 6), dtype=np.uint8)
    index[0, :] = 255
    png = encode_palette_png(np.asfortranarray(index)[:, ::-1], colour_map("slate_snow"))
    got, _ = decode_palette_png(png)
    np.testing.assert_array_equal(got[0], 255)
    np.testing.assert_array_equal(got[1:], 0)


def test_png_small_palette_and_every_compress_level() -> None:
    index = np.array([[0, 1, 2], [2, 1, 0]], dtype=np.uint8)
    pal = np.array([[255, 0, 0], [0, 255, 0], [0, 0, 255]], dtype=np.uint8)
    for level in range(10):
        got, got_pal = decode_palette_png(encode_palette_png(index, pal, compress_level=level))
        np.testing.assert_array_equal(got, index)
        np.testing.assert_array_equal(got_pal, pal)


def test_decoder_catches_a_corrupted_byte() -> None:
    png = bytearray(encode_palette_png(np.zeros((2, 2), np.uint8), colour_map("lichen")))
    png[-20] ^= 0xFF  # inside the IDAT payload
    with pytest.raises(PngError, match="CRC"):
        decode_palette_png(bytes(png))


@pytest.mark.parametrize(
    ("index", "pal", "field"),
    [
        (np.zeros((2, 2), np.int32), colour_map("lichen"), "index_uint8_2d"),
        (np.zeros((2, 2, 2), np.uint8), colour_map("lichen"), "index_uint8_2d"),
        (np.zeros((0, 3), np.uint8), colour_map("lichen"), "empty"),
        (np.zeros((2, 2), np.uint8), np.zeros((256, 4), np.uint8), "palette_rgb"),
        (np.zeros((2, 2), np.uint8), np.zeros((257, 3), np.uint8), "palette_rgb"),
        (np.zeros((2, 2), np.uint8), np.zeros((4, 3), np.float64), "palette_rgb"),
        (np.full((2, 2), 4, np.uint8), np.zeros((4, 3), np.uint8), "index 4"),
    ],
)
def test_png_refuses_bad_input(index: np.ndarray, pal: np.ndarray, field: str) -> None:
    with pytest.raises(ValueError, match=field):
        encode_palette_png(index, pal)


def test_png_refuses_bad_compress_level() -> None:
    with pytest.raises(ValueError, match="compress_level"):
        encode_palette_png(np.zeros((1, 1), np.uint8), colour_map("lichen"), compress_level=10)


# --------------------------------------------------------------------------- colour maps
def _luminance(rgb: np.ndarray) -> np.ndarray:
    # Rec. ITU-R BT.709 luma weights, applied to the stored (gamma-encoded) values
    return rgb.astype(float) @ np.array([0.2126, 0.7152, 0.0722])


def test_colour_maps_are_256_by_3_uint8_and_read_only() -> None:
    assert set(COLOUR_MAP_KINDS.values()) == {"diverging", "sequential"}
    assert set(COLOUR_MAPS) == set(COLOUR_MAP_KINDS)
    for table in COLOUR_MAPS.values():
        assert table.shape == (256, 3) and table.dtype == np.uint8
        with pytest.raises(ValueError):
            table[0, 0] = 1


def test_sequential_maps_brighten_and_diverging_maps_peak_in_the_middle() -> None:
    # common practice: a sequential map is monotonic in lightness; a diverging map with
    # coloured ends is lightest at its centre so zero amplitude reads as "nothing"
    for name, kind in COLOUR_MAP_KINDS.items():
        lum = _luminance(colour_map(name))
        if kind == "sequential" or name == "slate_snow":  # slate_snow: a plain grey ramp
            assert np.all(np.diff(lum) >= 0), name
            assert lum[-1] - lum[0] > 150, name
        else:
            assert 120 <= int(np.argmax(lum)) <= 135, name
            assert lum.max() - max(lum[0], lum[-1]) > 150, name


def test_unknown_colour_map_is_refused() -> None:
    with pytest.raises(ValueError, match="colour_map = 'nope' is not one of"):
        colour_map("nope")


# --------------------------------------------------------------------------- scaling
def test_scale_endpoints_middle_and_clipping() -> None:
    data = np.array([-3.0, -1.0, 0.0, 1.0, 3.0])
    idx = scale_to_index(data, -1.0, 1.0)
    assert idx.dtype == np.uint8
    # -1 -> 0, 0 -> 127.5 rounds half up to 128, +1 -> 255; outside clipped
    np.testing.assert_array_equal(idx, [0, 0, 128, 255, 255])
    # with one unit per level, values half-way between levels round up
    np.testing.assert_array_equal(scale_to_index(np.array([0.49, 0.5, 254.5]), 0.0, 255.0),
                                  [0, 1, 255])


def test_scale_is_monotonic_and_uses_all_levels() -> None:
    data = np.linspace(-2.0, 5.0, 10_000)
    idx = scale_to_index(data, -2.0, 5.0)
    assert np.all(np.diff(idx.astype(int)) >= 0)
    assert set(np.unique(idx)) == set(range(256))


def test_scale_handles_non_finite_and_integer_data() -> None:
    data = np.array([[np.nan, np.inf], [-np.inf, 1.0]])
    with np.errstate(all="raise"):
        idx = scale_to_index(data, 0.0, 1.0)
    np.testing.assert_array_equal(idx, [[128, 128], [128, 255]])
    np.testing.assert_array_equal(scale_to_index(data, 0.0, 1.0, nonfinite_index=0),
                                  [[0, 0], [0, 255]])
    np.testing.assert_array_equal(scale_to_index(np.array([0, 5, 10]), 0, 10), [0, 128, 255])


def test_scale_with_equal_limits_is_a_step() -> None:
    idx = scale_to_index(np.array([-1.0, 0.0, 1.0, np.nan]), 0.0, 0.0)
    np.testing.assert_array_equal(idx, [0, 128, 255, 128])


@pytest.mark.parametrize(("vmin", "vmax", "field"), [
    (1.0, 0.0, "vmax"), (np.nan, 1.0, "vmin"), (0.0, np.inf, "vmax")])
def test_scale_refuses_bad_limits(vmin: float, vmax: float, field: str) -> None:
    with pytest.raises(ValueError, match=field):
        scale_to_index(np.zeros(3), vmin, vmax)


def test_scale_refuses_bad_nonfinite_index() -> None:
    with pytest.raises(ValueError, match="nonfinite_index"):
        scale_to_index(np.zeros(3), 0.0, 1.0, nonfinite_index=300)
