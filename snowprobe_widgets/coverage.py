"""Covering a debris field: platforms, lanes, turns, coverage rate and a probe line.

A platform flies (or walks) parallel lanes ``spacing_m`` apart across the debris area, in a
back-and-forth pattern, turning at each lane end. Time to cover = (track along the lanes +
transit between pieces of track) / speed + turns x turn time. Lanes run along the length of
a rectangle, or along ``heading_deg`` over a polygon (x east, y north, metres); the first
lane lies half a spacing inside the area's edge and each lane is the chord of its centre
line through the area (a lane sweeping a narrow corner of a polygon may miss part of it);
when the width is not a whole number of spacings the lanes are centred across it.

The ICAR Avalanche Rescue Commission's 2006 guideline for new search systems ("Testperiod
for new search systems in the field") asks for a coverage of **100 m2/min** and **at least
one measurement and one result per second** (FIELD_FACTS 0.6 and 4.4). We check the coverage
rate and the measurement (trace) rate; whether a result follows every second depends on the
processing, which is not modelled here.

Probe line (ICAR probing strategies; Genswein et al. 2014, ISSW, via ICAR): slalom probing
on a 50 x 50 cm grid finds a person within reach of the probe with probability 0.88; the
first pass probes to 1.5 m, a second pass then to full depth (Perla 1967 recommended at
least 3 m). Team size and the time per probe are the user's; the defaults are marked.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ._validate import check_range

__all__ = [
    "ICAR_RATE_M2_MIN",
    "ICAR_MEASUREMENTS_PER_S",
    "MAX_LANES",
    "Platform",
    "PLATFORMS",
    "DebrisArea",
    "Coverage",
    "coverage",
    "ProbeLine",
]

#: ICAR 2006 guideline for new search systems: coverage rate, m2/min.
ICAR_RATE_M2_MIN = 100.0
#: ICAR 2006 guideline: measurements (and results) per second.
ICAR_MEASUREMENTS_PER_S = 1.0
_MAX_VERTICES = 200
#: Most lanes in one plan (a 10 km wide area at 2 m).
MAX_LANES = 5000


@dataclass(frozen=True)
class Platform:
    """What carries the radar across the debris.

    Parameters
    ----------
    name : str
    speed_m_s : float
        Speed along a lane, m/s, in (0, 50].
    antenna_height_m : float
        Antenna height above the snow, m, in [0.05, 30] (the radar model's range).
    trace_rate_hz : float
        Recorded traces per second, in (0, 100000].
    turn_time_s : float
        Time to turn from one lane onto the next, s, in [0, 3600].
    sources : tuple of str
        Where each default comes from.
    """

    name: str
    speed_m_s: float
    antenna_height_m: float
    trace_rate_hz: float
    turn_time_s: float
    sources: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "speed_m_s", check_range(
            "speed_m_s", self.speed_m_s, 0.0, 50.0, unit="m/s", low_open=True))
        object.__setattr__(self, "antenna_height_m", check_range(
            "antenna_height_m", self.antenna_height_m, 0.05, 30.0, unit="m"))
        object.__setattr__(self, "trace_rate_hz", check_range(
            "trace_rate_hz", self.trace_rate_hz, 0.0, 1e5, unit="1/s", low_open=True))
        object.__setattr__(self, "turn_time_s", check_range(
            "turn_time_s", self.turn_time_s, 0.0, 3600.0, unit="s"))

    @property
    def trace_spacing_m(self) -> float:
        """Distance between traces along a lane, m: speed / trace rate."""
        return self.speed_m_s / self.trace_rate_hz


PLATFORMS: dict[str, Platform] = {p.name: p for p in (
    Platform("hand-held or sled", 1.0, 0.3, 20.0, 10.0, (
        "speed 1 m/s: walking pace on debris, common practice",
        "height 0.3 m: sledge antennas 0-0.3 m above the snow (Jaedicke 2003)",
        "20 traces/s: common practice (assumption)",
        "10 s per turn: common practice (assumption)")),
    Platform("drone", 2.0, 15.0, 50.0, 5.0, (
        "2 m/s at 15 m: octocopter snow radar (FIELD_FACTS 1.8, sea-ice survey)",
        "50 traces/s: assumption",
        "5 s per turn: assumption")),
    Platform("helicopter", 2.1, 6.0, 50.0, 30.0, (
        "2.1 m/s: 5-10 km/h raster flight of the Austrian airborne prototype (press "
        "reports, FIELD_FACTS 1.1)",
        "6 m: aerial-tramway tests standing in for a helicopter (Heilig & Schneebeli "
        "2006); the helicopter's own height was not published",
        "50 traces/s: assumption", "30 s per turn: assumption")),
)}


def _simple_polygon(xy: np.ndarray) -> bool:
    """True when no two non-adjacent edges of the closed polygon cross."""
    n = len(xy)
    a = xy
    b = np.roll(xy, -1, axis=0)

    def orient(p: np.ndarray, q: np.ndarray, r: np.ndarray) -> float:
        return float((q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]))

    for i in range(n):
        for j in range(i + 1, n):
            if j == i + 1 or (i == 0 and j == n - 1):
                continue
            d1, d2 = orient(a[i], b[i], a[j]), orient(a[i], b[i], b[j])
            d3, d4 = orient(a[j], b[j], a[i]), orient(a[j], b[j], b[i])
            if d1 * d2 < 0 and d3 * d4 < 0:
                return False
    return True


@dataclass(frozen=True, eq=False)
class DebrisArea:
    """The debris field to search, a simple polygon in metres.

    Build one with :meth:`rectangle` or :meth:`polygon`.

    Attributes
    ----------
    vertices_m : ndarray, shape (n, 2)
        Corners (x, y) in metres, in order, not closed.
    label : str
        "100 m x 50 m rectangle" or "polygon of 7 corners".
    """

    vertices_m: np.ndarray
    label: str = ""

    @classmethod
    def rectangle(cls, length_m: float, width_m: float) -> DebrisArea:
        """A rectangle ``length_m`` along x by ``width_m`` along y; lanes run along x."""
        length = check_range("length_m", length_m, 0.0, 1e4, unit="m", low_open=True)
        width = check_range("width_m", width_m, 0.0, 1e4, unit="m", low_open=True)
        xy = np.array([[0, 0], [length, 0], [length, width], [0, width]], float)
        return cls(xy, f"{length:g} m x {width:g} m rectangle")

    @classmethod
    def polygon(cls, points_m: object) -> DebrisArea:
        """A polygon from its corners ``[(x, y), ...]`` in metres (3 to 200, not crossing)."""
        xy = np.asarray(points_m, float)
        if xy.ndim != 2 or xy.shape[1] != 2:
            raise ValueError(f"points_m must be a list of (x, y) pairs, got shape {xy.shape}")
        if not 3 <= len(xy) <= _MAX_VERTICES:
            raise ValueError(f"points_m has {len(xy)} corners; a polygon needs 3 to "
                             f"{_MAX_VERTICES}")
        if not np.all(np.isfinite(xy)) or np.abs(xy).max() > 1e4:
            raise ValueError("points_m must be finite coordinates within +-10000 m")
        if np.all(xy[0] == xy[-1]):
            xy = xy[:-1]
        if not _simple_polygon(xy):
            raise ValueError("the polygon's edges cross each other; give the corners in "
                             "order around the area")
        area = _shoelace(xy)
        if area <= 1e-6:
            raise ValueError(f"the polygon's area is {area:g} m2; its corners must enclose "
                             "an area")
        return cls(xy, f"polygon of {len(xy)} corners")

    @property
    def area_m2(self) -> float:
        """Area, m2."""
        return _shoelace(self.vertices_m)

    def _turned(self, heading_deg: float) -> np.ndarray:
        h = math.radians(check_range("heading_deg", heading_deg, -360.0, 360.0, unit="deg"))
        c, sn = math.cos(h), math.sin(h)
        return self.vertices_m @ np.array([[c, -sn], [sn, c]])  # turn lanes onto x

    def chords(self, y_m: object, heading_deg: float = 0.0) -> list[np.ndarray]:
        """Pieces of the line y = const inside the area, for each ``y_m`` (turned frame).

        Returns
        -------
        list of ndarray, shape (n_pieces, 2)
            Start and end x of each piece, increasing.
        """
        xy = self._turned(heading_deg)
        a, b = xy, np.roll(xy, -1, axis=0)
        lo = np.minimum(a[:, 1], b[:, 1])
        hi = np.maximum(a[:, 1], b[:, 1])
        out = []
        for y in np.atleast_1d(np.asarray(y_m, float)):
            crosses = (lo <= y) & (y < hi)
            t = (y - a[crosses, 1]) / (b[crosses, 1] - a[crosses, 1])
            xs = np.sort(a[crosses, 0] + t * (b[crosses, 0] - a[crosses, 0]))
            out.append(xs.reshape(-1, 2))
        return out

    def width_across_m(self, heading_deg: float = 0.0) -> float:
        """Extent of the area across the lanes, m."""
        y = self._turned(heading_deg)[:, 1]
        return float(y.max() - y.min())

    def lane_centres_m(self, spacing_m: float, heading_deg: float = 0.0) -> np.ndarray:
        """Across-lane coordinate of each lane's centre line (turned frame), m: as many
        strips ``spacing_m`` wide as the width needs, centred across it."""
        s = check_range("spacing_m", spacing_m, 0.01, 1e3, unit="m")
        y = self._turned(heading_deg)[:, 1]
        y0, y1 = float(y.min()), float(y.max())
        n = max(1, math.ceil((y1 - y0) / s - 1e-9))
        if n > MAX_LANES:
            raise ValueError(f"spacing_m = {s:g} m across {y1 - y0:g} m needs {n} lanes; at "
                             f"most {MAX_LANES} allowed (widen the spacing)")
        start = y0 - 0.5 * (n * s - (y1 - y0))
        return start + (np.arange(n) + 0.5) * s

    def lanes(self, spacing_m: float, heading_deg: float = 0.0) -> list[np.ndarray]:
        """The pieces of track on each lane, in lane order (:meth:`chords` of
        :meth:`lane_centres_m`)."""
        return self.chords(self.lane_centres_m(spacing_m, heading_deg), heading_deg)

    def width_profile(self, heading_deg: float = 0.0, samples: int = 400
                      ) -> tuple[np.ndarray, np.ndarray]:
        """Across-lane positions and the area's length along the lanes at each: a target
        placed uniformly over the area lies at y with probability proportional to it."""
        xy = self._turned(heading_deg)
        y0, y1 = float(xy[:, 1].min()), float(xy[:, 1].max())
        ys = y0 + (np.arange(samples) + 0.5) / samples * (y1 - y0)
        a, b = xy, np.roll(xy, -1, axis=0)
        lo = np.minimum(a[:, 1], b[:, 1])
        hi = np.maximum(a[:, 1], b[:, 1])
        crosses = (lo[None, :] <= ys[:, None]) & (ys[:, None] < hi[None, :])
        with np.errstate(divide="ignore", invalid="ignore"):
            t = (ys[:, None] - a[None, :, 1]) / (b[None, :, 1] - a[None, :, 1])
        xs = np.sort(np.where(crosses, a[None, :, 0] + t * (b[None, :, 0] - a[None, :, 0]),
                              np.inf), axis=1)
        # crossings alternate in, out, in, out along a line: add the outs, take the ins
        sign = np.where(np.arange(xs.shape[1]) % 2 == 1, 1.0, -1.0)
        return ys, np.where(np.isfinite(xs), xs * sign, 0.0).sum(axis=1)


def _shoelace(xy: np.ndarray) -> float:
    x, y = xy[:, 0], xy[:, 1]
    return float(0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


@dataclass(frozen=True, eq=False)
class Coverage:
    """How long a platform takes to cover an area with lanes ``spacing_m`` apart.

    Attributes
    ----------
    spacing_m : float
    area_m2 : float
    lanes : int
    turns : int
        Lane changes (lanes - 1).
    track_m : float
        Length flown along the lanes inside the area, m.
    transit_m : float
        Length flown between pieces of track (outside the area), m.
    time_s : float
        Time to cover: (track + transit) / speed + turns x turn time, s.
    rate_m2_min : float
        Area / time, m2/min.
    measurements_per_s : float
        The platform's trace rate.
    trace_spacing_m : float
        Distance between traces along a lane, m.
    icar_rate_ok, icar_measurements_ok : bool
        Against the ICAR 2006 guideline (100 m2/min; 1 measurement per second).
    schedule_s, schedule_track_m : ndarray
        Times and track covered at each lane event: :meth:`track_done_m` interpolates.
    lane_y_m, lane_start_s, lane_end_s : ndarray, shape (lanes,)
        Across-lane position of each lane flown (turned frame), and when its track
        starts and ends.
    heading_deg : float
    """

    spacing_m: float
    area_m2: float
    lanes: int
    turns: int
    track_m: float
    transit_m: float
    time_s: float
    rate_m2_min: float
    measurements_per_s: float
    trace_spacing_m: float
    icar_rate_ok: bool
    icar_measurements_ok: bool
    schedule_s: np.ndarray = field(repr=False)
    schedule_track_m: np.ndarray = field(repr=False)
    lane_y_m: np.ndarray = field(repr=False)
    lane_start_s: np.ndarray = field(repr=False)
    lane_end_s: np.ndarray = field(repr=False)
    heading_deg: float = 0.0

    @property
    def icar_ok(self) -> bool:
        """Both ICAR 2006 checks pass (coverage rate and measurement rate)."""
        return self.icar_rate_ok and self.icar_measurements_ok

    def track_done_m(self, time_s: object) -> np.ndarray:
        """Track length covered inside the area by ``time_s`` after the start, m."""
        return np.interp(np.asarray(time_s, float), self.schedule_s, self.schedule_track_m)


def coverage(area: DebrisArea, platform: Platform, spacing_m: float,
             heading_deg: float = 0.0) -> Coverage:
    """Time and rate to cover ``area`` with ``platform`` on lanes ``spacing_m`` apart.

    Lanes are flown back and forth; between two pieces of track (a gap in a polygon, or a
    lane end that does not line up with the next lane's start) the platform moves at its
    lane speed; every lane change costs one turn time.
    """
    if not isinstance(area, DebrisArea):
        raise ValueError(f"area must be a DebrisArea, got {type(area).__name__}")
    if not isinstance(platform, Platform):
        raise ValueError(f"platform must be a Platform, got {type(platform).__name__}")
    centres = area.lane_centres_m(spacing_m, heading_deg)
    lanes = area.chords(centres, heading_deg)
    v = platform.speed_m_s
    t, track, transit = 0.0, 0.0, 0.0
    times, done = [0.0], [0.0]
    lane_y, starts, ends = [], [], []
    here: float | None = None
    for k, pieces in enumerate(lanes):
        if not len(pieces):
            continue
        lane_y.append(float(centres[k]))
        seq = pieces if k % 2 == 0 else pieces[::-1, ::-1]
        if here is not None:
            t += platform.turn_time_s
            gap = abs(float(seq[0, 0]) - here)
            transit += gap
            t += gap / v
            times.append(t)
            done.append(track)
        starts.append(t)
        for j, (x0, x1) in enumerate(seq):
            if j > 0:
                gap = abs(float(x0) - here)
                transit += gap
                t += gap / v
                times.append(t)
                done.append(track)
            length = abs(float(x1) - float(x0))
            track += length
            t += length / v
            times.append(t)
            done.append(track)
            here = float(x1)
        ends.append(t)
    n_lanes = sum(1 for p in lanes if len(p))
    rate = area.area_m2 / (t / 60.0)
    return Coverage(
        spacing_m=float(spacing_m), area_m2=area.area_m2, lanes=n_lanes,
        turns=max(n_lanes - 1, 0), track_m=track, transit_m=transit, time_s=t,
        rate_m2_min=rate, measurements_per_s=platform.trace_rate_hz,
        trace_spacing_m=platform.trace_spacing_m,
        icar_rate_ok=rate >= ICAR_RATE_M2_MIN,
        icar_measurements_ok=platform.trace_rate_hz >= ICAR_MEASUREMENTS_PER_S,
        schedule_s=np.array(times), schedule_track_m=np.array(done),
        lane_y_m=np.array(lane_y), lane_start_s=np.array(starts), lane_end_s=np.array(ends),
        heading_deg=float(heading_deg))


@dataclass(frozen=True)
class ProbeLine:
    """A probe line: slalom probing on a square grid, a shallow pass then full depth.

    Parameters
    ----------
    team_size : int
        Probers in the line, in [1, 200] (default 8: common practice, set your own).
    grid_m : float
        Probe grid, m, in [0.2, 2] (0.5: slalom probing, ICAR / Genswein et al. 2014).
    pod_per_pass : float
        Probability that one pass finds a person within the probe's reach, in (0, 1]
        (0.88: slalom probing on the 50 x 50 cm grid, ICAR / Genswein et al. 2014).
    first_depth_m : float
        Probe depth of the first pass, m (1.5: ICAR probing strategy).
    full_depth_m : float
        Probe depth of the second pass, m (3.0: Perla 1967, "at least 3 m").
    first_probe_s, full_probe_s : float
        Time per probe hole of each pass, one prober, s (10 and 20 s: assumptions, set
        them from your team's training times).
    """

    team_size: int = 8
    grid_m: float = 0.5
    pod_per_pass: float = 0.88
    first_depth_m: float = 1.5
    full_depth_m: float = 3.0
    first_probe_s: float = 10.0
    full_probe_s: float = 20.0

    def __post_init__(self) -> None:
        if isinstance(self.team_size, bool) or not float(self.team_size).is_integer():
            raise ValueError(f"team_size must be a whole number, got {self.team_size!r}")
        object.__setattr__(self, "team_size", int(check_range(
            "team_size", self.team_size, 1, 200)))
        for name, lo, hi, unit in (("grid_m", 0.2, 2.0, "m"), ("first_depth_m", 0.5, 10.0, "m"),
                                   ("full_depth_m", 0.5, 10.0, "m"),
                                   ("first_probe_s", 1.0, 600.0, "s"),
                                   ("full_probe_s", 1.0, 600.0, "s")):
            object.__setattr__(self, name, check_range(name, getattr(self, name), lo, hi,
                                                       unit=unit))
        object.__setattr__(self, "pod_per_pass", check_range(
            "pod_per_pass", self.pod_per_pass, 0.0, 1.0, low_open=True))
        if self.full_depth_m < self.first_depth_m:
            raise ValueError(f"full_depth_m = {self.full_depth_m:g} m is shallower than "
                             f"first_depth_m = {self.first_depth_m:g} m")

    def pass_time_s(self, area_m2: float, full: bool) -> float:
        """Time for one pass over ``area_m2``, s (holes / team size x time per hole)."""
        holes = area_m2 / self.grid_m**2
        per = self.full_probe_s if full else self.first_probe_s
        return holes / self.team_size * per

    def rate_m2_min(self, full: bool) -> float:
        """Area probed per minute by the whole line, m2/min."""
        per = self.full_probe_s if full else self.first_probe_s
        return self.team_size * self.grid_m**2 / per * 60.0

    def pod(self, time_s: object, depth_m: object, area_m2: float) -> np.ndarray:
        """Probability of having found a person at ``depth_m`` by ``time_s``.

        The second pass starts when the first has covered the area; the two passes are
        taken as independent; progress is even over the area.

        Returns
        -------
        ndarray, shape (n_times, n_depths)
        """
        t = np.asarray(time_s, float)[:, None]
        d = np.asarray(depth_m, float)[None, :]
        t1 = self.pass_time_s(area_m2, False)
        t2 = self.pass_time_s(area_m2, True)
        p = self.pod_per_pass
        reach1 = (d <= self.first_depth_m) * p
        reach2 = (d <= self.full_depth_m) * p
        f1 = np.clip(t / t1, 0.0, 1.0)
        f2 = np.clip((t - t1) / t2, 0.0, 1.0)
        return reach1 * f1 + (1.0 - reach1) * reach2 * f2
