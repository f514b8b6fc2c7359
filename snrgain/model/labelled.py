"""Results as labelled arrays (xarray) and a tidy table (pandas), units in every variable.

:func:`to_xarray` turns a :class:`snrgain.model.results.Results` into one :class:`xarray.Dataset` whose dimensions
are named (``antenna``, ``target``, ``month``, ``utc_hour``, ``quantile``, ``component``,
``atmospheric_decile``) and whose variables carry their unit in ``attrs["units"]`` (``dB``, ``dBi``, ``dBm``,
``K``, ``-`` for ratios, probabilities, counts and flags).  :func:`to_dataframe` flattens it into one row per
target, antenna, month and UTC hour.  The CSV output is written from that table and the figures of the SNR
gain over the hours read the Dataset, so the numbers cannot disagree.  Variable and column names are the JSON's
keys (:meth:`Results.to_dict`), with the unit in the name.

xarray and pandas are imported here, not by ``import snrgain``: only a caller of these functions pays for them.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from snrgain.records import record

if TYPE_CHECKING:
    import pandas as pd
    import xarray as xr

    from snrgain.model.results import Results

T0_K = 290.0
"""Reference temperature of noise factors and Fa, ITU-R P.372 [K]."""

QUANTILES = (0.1, 0.5, 0.9)
"""The points of the SNR gain's spread the results give: 10 %, median, 90 % [-]."""

ATMOSPHERIC_DECILES = ("upper", "lower")
"""Labels of ``snr_gain_atmospheric_deciles_db``'s first axis: atmospheric noise at its P.372 upper, lower decile."""

UNITS: dict[str, str] = {
    # per antenna, target, month, hour
    "snr_gain_db": "dB",
    "snr_gain_atmospheric_deciles_db": "dB",
    # per antenna and target
    "snr_gain_quantile_db": "dB",
    "snr_gain_nominal_db": "dB",
    "probability_beats_reference": "-",
    "rank_for_target": "-",
    "rdf_db": "dB",
    "front_to_back_db": "dB",
    "gain_toward_target_dbi": "dBi",
    # per antenna
    "mean_gain_dbi": "dBi",
    "receiver_limited": "-",
    "chain_noise_figure_db": "dB",
    "chain_gain_db": "dB",
    "chain_noise_floor_dbm": "dBm",
    # per antenna, month, hour
    "noise_dbm": "dBm",
    "noise_by_component_dbm": "dBm",
    "margin_db": "dB",
    "receiver_snr_loss_db": "dB",
    "preamp_gain_needed_db": "dB",
    # per target
    "best_margin_db": "dB",
    # the sky on P.372's reference monopole, per component (or total), month, hour
    "fa_db": "dB",
    "upper_decile_db": "dB",
    "lower_decile_db": "dB",
    "total_fa_db": "dB",
    "total_upper_decile_db": "dB",
    "total_lower_decile_db": "dB",
    "median_power_sum_fa_db": "dB",
    "median_power_sum_temperature_k": "K",
    "daytime": "-",
}
"""Each variable's unit (``attrs["units"]``): dB, dBi, dBm, K, or ``-`` for ratios, probabilities and flags."""

DESCRIPTIONS: dict[str, str] = {
    "snr_gain_db": "SNR gain over the reference; NaN where the target is not listened for",
    "snr_gain_atmospheric_deciles_db": "snr_gain_db with atmospheric noise at its P.372 upper and lower deciles",
    "snr_gain_quantile_db": "10 %, median and 90 % points of the SNR gain over the spreads counted",
    "snr_gain_nominal_db": "snr_gain_db averaged in dB over the target's months and hours",
    "probability_beats_reference": "probability that the SNR gain reaches beat_by_db",
    "rank_for_target": "place in the target's ranking by median SNR gain (0: the reference)",
    "rdf_db": "receiving directivity factor toward the target (gain over the whole-sphere average)",
    "front_to_back_db": "front-to-back ratio at the target's mean elevation",
    "gain_toward_target_dbi": "weighted total gain toward the target",
    "mean_gain_dbi": "total gain averaged over the whole sphere, 0 below the horizon",
    "receiver_limited": "the margin, to 0.1 dB, falls below the margin target at some hour",
    "chain_noise_figure_db": "noise figure of the receiving chain",
    "chain_gain_db": "gain of the receiving chain",
    "chain_noise_floor_dbm": "the chain's noise floor at the receiver input in the bandwidth",
    "noise_dbm": "external noise delivered to the receiver input in the bandwidth",
    "noise_by_component_dbm": "noise_dbm per noise component",
    "margin_db": "noise_dbm over the chain's noise floor",
    "receiver_snr_loss_db": "SNR lost to the chain's noise",
    "preamp_gain_needed_db": "preamplifier gain that brings the margin to the target (NaN: none can)",
    "best_margin_db": "the best candidate's median SNR gain over the runner-up's",
    "fa_db": "median Fa of each noise component on P.372's reference monopole (dB above kT0b; -inf: screened)",
    "upper_decile_db": "upper decile deviation of each component's Fa",
    "lower_decile_db": "lower decile deviation of each component's Fa",
    "total_fa_db": "P.372 Section 8 total median Fa (dB above kT0b)",
    "total_upper_decile_db": "P.372 Section 8 total's upper decile deviation",
    "total_lower_decile_db": "P.372 Section 8 total's lower decile deviation",
    "median_power_sum_fa_db": "power sum of the components' median Fa, what the SNR uses (dB above kT0b)",
    "median_power_sum_temperature_k": "median_power_sum_fa_db as an antenna temperature, T0 10^(Fa/10)",
    "daytime": "sun above the horizon at the site",
}


@record
class Labelled:
    """The labelled arrays of a Results, in numpy only: what :func:`to_xarray` wraps into a Dataset.

    ``data`` maps each variable to (dimension names, array); ``coords`` each coordinate to (dimension, values[,
    attrs]); ``attrs`` the Dataset's attributes.  The terminal tables read these (no xarray import for a
    ranking); the Dataset is made from the same arrays, so the two cannot disagree.
    """

    data: dict
    coords: dict
    attrs: dict

    def get(self, name: str, **index: int) -> np.ndarray:
        """Variable ``name`` with the named dimensions fixed at the given integer positions,
        e.g. ``get("rdf_db", target=0)`` -> one value per antenna."""
        dims, arr = self.data[name]
        sel = tuple(index.pop(d) if d in index else slice(None) for d in dims)
        if index:
            raise KeyError(f"{name} has no dimension {sorted(index)}; its dimensions: {dims}")
        return np.asarray(arr)[sel]

    def coord(self, name: str) -> np.ndarray:
        return np.asarray(self.coords[name][1])

    @property
    def sizes(self) -> dict[str, int]:
        """Length of each dimension."""
        out: dict[str, int] = {}
        for dims, arr in self.data.values():
            out.update(zip(dims, np.shape(arr)))
        return out

    @classmethod
    def of(cls, results) -> Labelled:
        """The labelled arrays of a Results, a Labelled (itself) or a Dataset made by :func:`to_xarray`."""
        if isinstance(results, cls):
            return results
        if hasattr(results, "data_vars"):  # an xarray Dataset
            return cls(
                data={k: (tuple(v.dims), v.values) for k, v in results.data_vars.items()},
                coords={k: (c.dims[0], c.values) for k, c in results.coords.items()},
                attrs=dict(results.attrs),
            )
        return labelled(results)


def labelled(results: Results) -> Labelled:
    """The results' variables and coordinates as labelled numpy arrays (see :class:`Labelled`)."""
    r = results
    ants = r.antennas
    names = [a.name for a in ants]
    tnames = [t["name"] for t in r.targets]
    comps = list(r.noise.names)
    atm = ("atmospheric_decile", "target", "month", "utc_hour")

    def stack(attr):
        return np.stack([np.asarray(getattr(a, attr), dtype=float) for a in ants])

    ranked = r.target_results if len(r.target_results) == len(tnames) else []  # none yet: before the decisions
    ranks = np.zeros((len(ants), len(tnames)), dtype=int)
    for ti, tr in enumerate(ranked):
        for k, name in enumerate(tr.ranking):
            ranks[names.index(name), ti] = k + 1
    nan_atm = np.full((2, len(tnames), len(r.months), len(r.utc_hours)), np.nan)
    deciles = np.stack(
        [nan_atm if a.snr_gain_atmospheric_deciles_db is None else a.snr_gain_atmospheric_deciles_db for a in ants]
    )
    by_comp = np.stack(
        [
            np.stack([np.asarray(a.noise_by_component_dbm.get(c, np.full(a.noise_dbm.shape, np.nan))) for c in comps])
            if comps
            else np.zeros((0, *a.noise_dbm.shape))
            for a in ants
        ]
    )
    chain = {key: [float(a.chain.get(key, np.nan)) for a in ants] for key in ("noise_figure_db", "gain_db")}
    chain["noise_floor_dbm"] = [float(a.chain.get("noise_floor_dbm", np.nan)) for a in ants]
    mh = ("month", "utc_hour")
    n = r.noise
    data = {
        "snr_gain_db": (("antenna", "target", *mh), stack("snr_gain_db")),
        "snr_gain_atmospheric_deciles_db": (("antenna", *atm), deciles),
        "snr_gain_quantile_db": (
            ("antenna", "target", "quantile"),
            np.stack([stack("snr_gain_p10_db"), stack("snr_gain_median_db"), stack("snr_gain_p90_db")], axis=-1),
        ),
        "snr_gain_nominal_db": (("antenna", "target"), stack("snr_gain_nominal_db")),
        "probability_beats_reference": (("antenna", "target"), stack("probability_beats")),
        "rank_for_target": (("antenna", "target"), ranks),
        "rdf_db": (("antenna", "target"), stack("rdf_db")),
        "front_to_back_db": (("antenna", "target"), stack("front_to_back_db")),
        "gain_toward_target_dbi": (("antenna", "target"), stack("gain_dbi")),
        "mean_gain_dbi": (("antenna",), stack("mean_gain_dbi")),
        "receiver_limited": (("antenna",), np.array([bool(a.receiver_limited) for a in ants])),
        "chain_noise_figure_db": (("antenna",), np.array(chain["noise_figure_db"])),
        "chain_gain_db": (("antenna",), np.array(chain["gain_db"])),
        "chain_noise_floor_dbm": (("antenna",), np.array(chain["noise_floor_dbm"])),
        "noise_dbm": (("antenna", *mh), stack("noise_dbm")),
        "noise_by_component_dbm": (("antenna", "component", *mh), by_comp),
        "margin_db": (("antenna", *mh), stack("margin_db")),
        "receiver_snr_loss_db": (("antenna", *mh), stack("receiver_snr_loss_db")),
        "preamp_gain_needed_db": (("antenna", *mh), stack("preamp_gain_needed_db")),
        "best_margin_db": (("target",), np.array([tr.margin_db for tr in ranked] or [np.nan] * len(tnames))),
        "fa_db": (("component", *mh), np.asarray(n.fa_db, dtype=float)),
        "upper_decile_db": (("component", *mh), np.asarray(n.du_db, dtype=float)),
        "lower_decile_db": (("component", *mh), np.asarray(n.dl_db, dtype=float)),
        "total_fa_db": (mh, np.asarray(n.total_fa_db, dtype=float)),
        "total_upper_decile_db": (mh, np.asarray(n.total_du_db, dtype=float)),
        "total_lower_decile_db": (mh, np.asarray(n.total_dl_db, dtype=float)),
        "median_power_sum_fa_db": (mh, np.asarray(n.median_power_sum_fa_db, dtype=float)),
        "median_power_sum_temperature_k": (mh, T0_K * 10.0 ** (np.asarray(n.median_power_sum_fa_db) / 10.0)),
        "daytime": (mh, np.asarray(n.daytime, dtype=bool)),
    }
    coords = {
        "antenna": ("antenna", names),
        "family": ("antenna", [a.family for a in ants], {"units": "-", "description": "antenna family"}),
        "is_reference": ("antenna", [a is r.reference for a in ants], {"units": "-"}),
        "group": (
            "antenna",
            [a.group or a.name for a in ants],
            {"units": "-", "description": "the antenna to build: a switched antenna's name for each of its states"},
        ),
        "state": (
            "antenna",
            [a.state or "" for a in ants],
            {"units": "-", "description": "a switched antenna's state, e.g. 'NE (45 deg)'; '' for the others"},
        ),
        "target": ("target", tnames),
        "weight": ("target", [float(t["weight"]) for t in r.targets], {"units": "-"}),
        "bearing_deg": ("target", [float(t["bearing_deg"]) for t in r.targets], {"units": "deg"}),
        "elevation_min_deg": ("target", [float(t["elevation_min_deg"]) for t in r.targets], {"units": "deg"}),
        "elevation_max_deg": ("target", [float(t["elevation_max_deg"]) for t in r.targets], {"units": "deg"}),
        "best": ("target", [tr.best for tr in ranked] or [""] * len(tnames), {"units": "-"}),
        "runner_up": ("target", [tr.runner_up for tr in ranked] or [""] * len(tnames), {"units": "-"}),
        "month": ("month", np.asarray(r.months, dtype=int), {"units": "-", "description": "month of the year, 1-12"}),
        "utc_hour": ("utc_hour", np.asarray(r.utc_hours, dtype=float), {"units": "h", "description": "UTC hour"}),
        "quantile": ("quantile", np.asarray(QUANTILES), {"units": "-"}),
        "component": ("component", comps),
        "component_kind": ("component", list(n.kinds), {"units": "-"}),
        "atmospheric_decile": ("atmospheric_decile", list(ATMOSPHERIC_DECILES)),
    }
    return Labelled(
        data=data,
        coords=coords,
        attrs={
            "site": str(r.site.get("name", "")),
            "latitude_deg": float(r.site.get("latitude_deg", np.nan)),
            "longitude_deg": float(r.site.get("longitude_deg", np.nan)),
            "frequency_hz": float(r.freq_hz),
            "bandwidth_hz": float(r.bandwidth_hz),
            "reference": r.reference.name,
            "beat_by_db": float(r.beat_by_db),
            "margin_target_db": float(r.receiver.get("margin_target_db", np.nan)),
            "nside": int(r.nside),
            "scenario": str(r.source),
        },
    )


def to_xarray(results: Results) -> xr.Dataset:
    """The results as an :class:`xarray.Dataset` (see :meth:`snrgain.model.results.Results.to_xarray`)."""
    import xarray as xr

    lab = labelled(results)
    return xr.Dataset(
        {k: (dims, v, {"units": UNITS[k], "description": DESCRIPTIONS[k]}) for k, (dims, v) in lab.data.items()},
        coords=lab.coords,
        attrs=lab.attrs,
    )


DATAFRAME_COLUMNS = [
    "target",
    "rank_for_target",
    "antenna",
    "family",
    "month",
    "utc_hour",
    "snr_gain_db",
    "gain_toward_target_dbi",
    "rdf_db",
    "front_to_back_db",
    "noise_dbm",
    "margin_db",
    "receiver_snr_loss_db",
    "preamp_gain_needed_db",
    "snr_gain_nominal_db",
    "snr_gain_p10_db",
    "snr_gain_median_db",
    "snr_gain_p90_db",
    "probability_beats_reference",
]
"""The tidy table's columns, in order (units in the names; see :data:`UNITS`)."""


def to_dataframe(results: Results, *, listened_only: bool = True) -> pd.DataFrame:
    """The results as a tidy :class:`pandas.DataFrame` (see :meth:`snrgain.model.results.Results.to_dataframe`)."""
    return dataframe_from(to_xarray(results), listened_only=listened_only)


def dataframe_from(ds: xr.Dataset, *, listened_only: bool = True) -> pd.DataFrame:
    """The tidy table of a Dataset from :func:`to_xarray`: one row per target, antenna, month and UTC hour, the
    targets in the scenario's order, each target's antennas by rank (the reference first), then month and hour."""
    per_hour = ["snr_gain_db"]
    per_target = ["gain_toward_target_dbi", "rdf_db", "front_to_back_db", "snr_gain_nominal_db"]
    per_target += ["probability_beats_reference", "rank_for_target"]
    per_time = ["noise_dbm", "margin_db", "receiver_snr_loss_db", "preamp_gain_needed_db"]
    q = ds["snr_gain_quantile_db"]
    spread = {f"snr_gain_{lab}_db": q.sel(quantile=v, drop=True) for lab, v in zip(("p10", "median", "p90"), QUANTILES)}
    flat = ds[per_hour + per_target + per_time].assign(spread)
    flat = flat.reset_coords(
        [c for c in flat.coords if c not in ("antenna", "target", "month", "utc_hour", "family")], drop=True
    )
    df = flat.to_dataframe(dim_order=["target", "antenna", "month", "utc_hour"]).reset_index()
    if listened_only:
        df = df[np.isfinite(df["snr_gain_db"].to_numpy())]
    df["month"] = df["month"].astype(int)
    df["rank_for_target"] = df["rank_for_target"].astype(int)
    target_order = {name: i for i, name in enumerate(ds["target"].values.tolist())}
    df = df.assign(_t=df["target"].map(target_order))
    df = df.sort_values(["_t", "rank_for_target", "month", "utc_hour"], kind="stable").drop(columns="_t")
    return df[DATAFRAME_COLUMNS].reset_index(drop=True)


__all__ = ["to_xarray", "to_dataframe", "dataframe_from", "UNITS", "QUANTILES", "DATAFRAME_COLUMNS"]
