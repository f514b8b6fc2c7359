"""Wire structures described by the user, solved with an NEC-2 engine (PyNEC, optional extra ``nec``).

Geometry (snrgain's own layout, in a scenario's antenna table):

    family = "wire-structure"
    wires = [ { name = "lead", from = [0, 0, 0], to = [0, 0, 12], radius = "1 mm" },  # metres east, north, up
              { name = "top", from = [0, 0, 12], to = ["30 m", 0, "12 m"], gauge = 14 } ]
    feed = { point = [0, 0, 0.3] }                   # a point on the structure: the nearest segment
    loads = [ { wire = "top", distance = "30 m", resistance = "900 ohm" } ]   # a named wire, from its 'from' end

Wires ending at height 0 connect to the ground.  Each wire is cut into
segments of at most a twentieth of a wavelength.  The engine solves the
structure transmitting from the feed; its power gain pattern (vertical and
horizontal parts) on a 2 deg grid, by reciprocity the gain of the structure
receiving into a matched load, is interpolated to the directions asked; the
realized gain adds the mismatch between the feed impedance and the
transformer's load (``coax``, ``turns_ratio``).

Over lossy ground the engine's Sommerfeld solution is unreliable for wires
close to the ground: a dipole 0.02 wavelength above eps_r 10, 2 mS/m soil at
14 MHz gives 428-308j ohm against nec2c's 100+66j, while from 0.1 wavelength
up the two agree within 0.1 ohm (measured for this project).  So over lossy
ground, horizontal or sloping wires lower than 0.05 wavelength are refused;
vertical wires may reach the ground.  Over perfect ground any height is
accepted.  The families of snrgain's own (long wires, loops) cover the
low-wire cases.
"""

from __future__ import annotations

from typing import Annotated, Literal

import numpy as np
from pydantic import BeforeValidator, Field, model_validator

from snrgain.antennas.base import Antenna, AntennaParams, TransformerFeed, above_horizon, register
from snrgain.fields import GroundField, StrictModel, lengths, make_ground, quantity, wire_radius_m
from snrgain.physics.ground import C_M_PER_S
from snrgain.units import length_said

MIN_LOSSY_HEIGHT_WAVELENGTHS = 0.05


def _xyz(value):
    out = lengths(value, 3, what="a point [east, north, up]", example='[0, 0, "12 m"]', limit_m=5000)
    if out[2] < 0:
        raise ValueError(f"a wire cannot go below the ground (up = {length_said(out[2])})")
    return out


Point3 = Annotated[tuple[float, float, float], BeforeValidator(_xyz)]


class Wire(StrictModel):
    name: str | None = None
    start: Point3 = Field(alias="from")
    end: Point3 = Field(alias="to")
    radius: quantity("length", ge=1e-5, le=0.05) | None = None
    gauge: int | None = Field(default=None, ge=-3, le=40)

    @model_validator(mode="after")
    def _check(self):
        if np.allclose(self.start, self.end):
            raise ValueError("a wire needs two different ends")
        if self.radius is not None and self.gauge is not None:
            raise ValueError("give radius or gauge, not both")
        return self

    @property
    def radius_m(self) -> float:
        if self.radius is not None:
            return self.radius
        return wire_radius_m(gauge=self.gauge)

    @property
    def length_m(self) -> float:
        return float(np.linalg.norm(np.subtract(self.end, self.start)))


class Place(StrictModel):
    """Where a feed or load sits: a point on the structure (the nearest segment), or a named wire and a distance
    along it from its 'from' end."""

    point: Point3 | None = None
    wire: str | None = None
    distance: quantity("length", ge=0.0, le=5000.0) | None = None

    @model_validator(mode="after")
    def _one_way(self):
        by_point = self.point is not None
        by_wire = self.wire is not None or self.distance is not None
        if by_point == by_wire:
            raise ValueError(
                'give point = [east, north, up], or wire = "its name" with distance = "..." from its \'from\' end'
            )
        if by_wire and (self.wire is None or self.distance is None):
            raise ValueError("a place on a named wire needs both wire and distance")
        return self


class Load(Place):
    resistance: quantity("resistance", ge=0.0, le=1e6) = 0.0
    reactance: float = Field(default=0.0, ge=-1e6, le=1e6)


class WireStructureParams(AntennaParams):
    family: Literal["wire-structure"]
    wires: list[Wire] = Field(min_length=1, max_length=200)
    feed: Place
    loads: list[Load] = Field(default_factory=list)
    coax: Literal[50, 75] = 50
    turns_ratio: float | Literal["auto"] = "auto"
    ground: GroundField | None = None

    @model_validator(mode="after")
    def _places(self):
        names = [w.name for w in self.wires if w.name]
        if len(set(names)) != len(names):
            raise ValueError("two wires have the same name")
        by_name = {w.name: w for w in self.wires if w.name}
        for label, p in [("feed", self.feed), *((f"loads {i + 1}", ld) for i, ld in enumerate(self.loads))]:
            if p.wire is not None:
                if p.wire not in by_name:
                    raise ValueError(f"{label}: no wire named {p.wire!r}; the named wires are {sorted(by_name)}")
                if p.distance > by_name[p.wire].length_m + 1e-9:
                    raise ValueError(
                        f"{label}: {length_said(p.distance)} along {p.wire!r} runs past its end "
                        f"({length_said(by_name[p.wire].length_m)} long)"
                    )
            else:
                gap = min(_distance_to_wire(p.point, w) for w in self.wires)
                if gap > POINT_TOLERANCE_M:
                    raise ValueError(
                        f"{label}: the point {list(p.point)} lies {length_said(gap, decimals=2)} from the nearest wire "
                        f"(at most {length_said(POINT_TOLERANCE_M)})"
                    )
        return self


POINT_TOLERANCE_M = 0.5
"""How far a feed or load point may lie from the wire it marks [m]."""


def _distance_to_wire(point, wire: Wire) -> float:
    """Distance [m] from a point to a wire (a segment in space)."""
    a, b, p = (np.asarray(x, dtype=float) for x in (wire.start, wire.end, point))
    t = float(np.clip(np.dot(p - a, b - a) / np.dot(b - a, b - a), 0.0, 1.0))
    return float(np.linalg.norm(a + t * (b - a) - p))


def _engine():
    try:
        from PyNEC import nec_context
    except ImportError:
        raise ValueError("the wire-structure family needs PyNEC: pip install 'snrgain[nec]'") from None
    return nec_context


@register("wire-structure", WireStructureParams, "your own wires, feed and loads, solved by NEC-2 (PyNEC extra)")
class WireStructure(TransformerFeed, Antenna):
    """See the module docstring."""

    fixed_ground = True

    def __init__(self, params: WireStructureParams):
        super().__init__(params)
        self.ground = make_ground(params.ground)
        _engine()
        self._solved: dict[float, dict] = {}

    def _segments(self, wire: Wire, lam: float) -> int:
        return int(max(1, np.ceil(wire.length_m / (lam / 20))))

    def check_frequency(self, freq_hz):
        lam = C_M_PER_S / freq_hz
        if self.ground is None:
            return
        for i, w in enumerate(self.params.wires):
            vertical = np.isclose(w.start[0], w.end[0]) and np.isclose(w.start[1], w.end[1])
            low = min(w.start[2], w.end[2])
            if not vertical and low < MIN_LOSSY_HEIGHT_WAVELENGTHS * lam:
                raise ValueError(
                    f"wires {i + 1}: at {length_said(low)} it is lower than {MIN_LOSSY_HEIGHT_WAVELENGTHS} wavelength "
                    f"({length_said(MIN_LOSSY_HEIGHT_WAVELENGTHS * lam)}) over lossy ground, where the NEC-2 engine's "
                    "Sommerfeld solution is unreliable; raise it, use ground = 'perfect', or a family of snrgain's "
                    "own (beverage, bog, terminated-loop)"
                )

    def _solve(self, freq_hz: float) -> dict:
        if freq_hz in self._solved:
            return self._solved[freq_hz]
        self.check_frequency(freq_hz)
        nec_context = _engine()
        lam = C_M_PER_S / freq_hz
        ctx = nec_context()
        geo = ctx.get_geometry()
        segs = []
        touches = False
        for i, w in enumerate(self.params.wires):
            n = self._segments(w, lam)
            segs.append(n)
            geo.wire(i + 1, n, *w.start, *w.end, w.radius_m, 1.0, 1.0)
            touches |= w.start[2] == 0 or w.end[2] == 0
        ctx.geometry_complete(1 if touches else 0)
        if self.ground is None:
            ctx.gn_card(1, 0, 0, 0, 0, 0, 0, 0)
        else:
            ctx.gn_card(2, 0, self.ground.permittivity, self.ground.conductivity_s_per_m, 0, 0, 0, 0)

        def seg_of(place):
            """(wire tag, segment) of a place: the segment holding the distance, or the nearest segment centre."""
            if place.wire is not None:
                i = next(k for k, w in enumerate(self.params.wires) if w.name == place.wire)
                n, w = segs[i], self.params.wires[i]
                return i + 1, int(min(n, max(1, np.floor(place.distance / w.length_m * n) + 1)))
            best = None
            for i, (w, n) in enumerate(zip(self.params.wires, segs)):
                a, b = np.asarray(w.start), np.asarray(w.end)
                centres = a + np.outer((np.arange(n) + 0.5) / n, b - a)
                d = np.linalg.norm(centres - np.asarray(place.point), axis=1)
                k = int(np.argmin(d))
                if best is None or d[k] < best[0]:
                    best = (d[k], i + 1, k + 1)
            return best[1], best[2]

        for ld in self.params.loads:
            tag, s = seg_of(ld)
            omega = 2 * np.pi * freq_hz
            # series R plus an inductance or capacitance that gives the reactance asked
            if ld.reactance >= 0:
                ctx.ld_card(0, tag, s, s, ld.resistance, ld.reactance / omega, 0.0)
            else:
                ctx.ld_card(0, tag, s, s, ld.resistance, 0.0, -1.0 / (omega * ld.reactance))
        tag, s = seg_of(self.params.feed)
        ctx.ex_card(0, tag, s, 0, 1.0, 0, 0, 0, 0, 0)
        ctx.fr_card(0, 1, freq_hz / 1e6, 0)
        ctx.rp_card(0, 46, 180, 1, 5, 0, 0, 0.0, 0.0, 2.0, 2.0, 0, 0)  # X = 1: vertical and horizontal parts
        rp = ctx.get_radiation_pattern(0)
        theta = np.asarray(rp.get_theta_angles())
        phi = np.asarray(rp.get_phi_angles())
        # The flat vertical/horizontal gain lists run over theta fastest, phi slowest.
        gv = np.asarray(rp.get_gain_vert(), dtype=float).reshape(phi.size, theta.size).T
        gh = np.asarray(rp.get_gain_horiz(), dtype=float).reshape(phi.size, theta.size).T
        z_in = complex(ctx.get_input_parameters(0).get_impedance()[0])
        el = 90.0 - theta[::-1]
        # NEC's phi runs counter-clockwise from east (x); the compass bearing is 90 - phi.
        bearing = np.mod(90.0 - phi, 360.0)
        order = np.argsort(bearing)
        from scipy.interpolate import RegularGridInterpolator  # slow to import: here, when needed

        interp = {}
        for key, g in (("v", gv), ("h", gh)):
            grid = np.maximum(g[::-1, :][:, order], -100.0)
            b = bearing[order]
            b_ext = np.concatenate([b[-1:] - 360.0, b, b[:1] + 360.0])
            grid_ext = np.concatenate([grid[:, -1:], grid, grid[:, :1]], axis=1)
            interp[key] = RegularGridInterpolator((el, b_ext), grid_ext, bounds_error=False, fill_value=None)
        self._solved[freq_hz] = {"interp": interp, "z_in": z_in}
        return self._solved[freq_hz]

    def feed_point_impedance(self, freq_hz: float) -> complex:
        return self._solve(freq_hz)["z_in"]

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        sol = self._solve(freq_hz)
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        pts = np.stack([np.clip(np.degrees(el), 0, 90).ravel(), np.mod(np.degrees(az), 360.0).ravel()], axis=-1)
        m = self.mismatch(freq_hz)
        out = []
        for key in ("v", "h"):
            g = 10 ** (sol["interp"][key](pts).reshape(az.shape) / 10) * m
            out.append(np.where(above_horizon(el), g, 0.0))
        return out[0], out[1]

    def describe(self):
        return {**super().describe(), "wires": len(self.params.wires)}
