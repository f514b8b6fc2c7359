"""Results of a scenario of several bands: each band's own :class:`Results` and the station plan across them."""

from __future__ import annotations

from dataclasses import field
from typing import Any

from snrgain.model.results import SCHEMA_VERSION, Results, jsonable
from snrgain.records import record


@record
class BandResults:
    """``bands``: (band name, that band's Results) in the file's order; ``plan``: which antennas to build for
    every band together (:func:`snrgain.decide.bandplan.plan_across_bands`), ``columns`` naming its targets as
    (band, target) pairs."""

    bands: tuple[tuple[str, Results], ...]
    plan: Any = None
    columns: tuple[tuple[str, str], ...] = ()
    notices: list = field(default_factory=list)

    def band(self, name: str) -> Results:
        """The Results of one band."""
        for n, r in self.bands:
            if n == name:
                return r
        raise KeyError(f"no band named {name!r}; the bands are {[n for n, _ in self.bands]}")

    @property
    def warnings(self) -> list[str]:
        """Every band's warnings, each marked with its band; one said word for word in several bands (a whip's
        overload by the same station) once, marked with all of them, where it was first said; then what holds across
        the bands (``notices``)."""
        return self._marked([(name, r.warnings) for name, r in self.bands])

    def warnings_apart(self) -> tuple[list[str], dict[str, int]]:
        """(said, apart): :attr:`warnings` but those on candidates the plan across the bands does not build or does
        not use on the band (each band's :meth:`Results.notices_apart` against :meth:`built_names` of that band),
        counted by antenna instead (its name: how many, over every band)."""
        from snrgain.model.results import apart_counts
        from snrgain.outputs.messages import notice_text, said_once

        per_band, counts, seen = [], {}, set()
        for name, r in self.bands:
            said, apart = r.notices_apart(self.built_names(name))
            unit = r.site.get("length_unit", "m")
            per_band.append((name, [notice_text(n, unit=unit) for n in said]))
            once = []  # a warning said word for word on several bands counts once, as it would be said once
            for n in apart:
                key = (n.antenna, notice_text(n, unit=unit))
                if key not in seen:
                    seen.add(key)
                    once.append(n)
            apart_counts(r, once, counts)
        return said_once(self._marked(per_band)), counts  # merged across bands first, then a caution said once

    def built_names(self, band: str | None = None) -> frozenset[str] | None:
        """What the plan across the bands builds (:meth:`Results.built_names` of each band against it, taken
        together: a phasing unit built for one band brings its parts on every band they serve); with ``band``, what
        it builds and uses on that band: the antennas that serve a target there (a switched one with every state, a
        phasing unit with its parts), so that a built antenna's warnings on a band it does not serve are set apart
        too; None without a plan."""
        if self.plan is None:
            return None
        if band is None:
            return frozenset().union(*(r.built_names(self.plan.antennas) for _, r in self.bands))
        serving = {
            x
            for c, rows in self.plan.by_target.items()
            if self.columns[c][0] == band
            for sv in rows
            for x in (sv.antenna, sv.group)
            if x is not None
        }
        return self.band(band).built_names(sorted(serving))

    def _marked(self, per_band: list[tuple[str, list[str]]]) -> list[str]:
        from snrgain.outputs.messages import notice_text

        unit = self.bands[0][1].site.get("length_unit", "m") if self.notices else "m"
        return band_marked(per_band) + [notice_text(n, unit=unit) for n in self.notices]

    def plan_dict(self) -> dict[str, Any]:
        from snrgain.model.results import plan_to_dict

        return plan_to_dict(
            self.plan, "by_band_and_target", lambda c: {"band": self.columns[c][0], "target": self.columns[c][1]}
        )

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready: ``bands`` (each band's full results, as a single-band run gives them, with its ``band``
        name) and ``station_plan`` across the bands."""
        return jsonable(
            {
                "schema_version": SCHEMA_VERSION,
                "bands": [{"band": name, **r.to_dict()} for name, r in self.bands],
                "station_plan": self.plan_dict(),
                "warnings": self.warnings,
            }
        )


def band_marked(per_band: list[tuple[str, list[str]]]) -> list[str]:
    """Warnings said band by band ((band name, its warnings) in the file's order), each once, marked with the bands
    it is said on ("[160 m, 80 m] ..."), where it was first said: rank's warnings across the bands and check's
    geometry warnings."""
    bands_of: dict[str, list[str]] = {}
    for name, texts in per_band:
        for w in texts:
            names = bands_of.setdefault(w, [])
            if name not in names:
                names.append(name)
    return [f"[{', '.join(names)}] {w}" for w, names in bands_of.items()]
