"""Several bands in one scenario (``[[band]]``): each band as a scenario of its own.

A station plans its receiving antennas for 160, 80 and 40 m at once.  The file then gives ``[[band]]`` tables
(each with ``frequency``, ``bandwidth`` and optionally ``name``, ``months`` and ``utc_hours``), and a target may
name the bands it is listened on (``bands = ["160 m"]``; default every band).  :func:`split_bands` turns such a
file into one single-band scenario per band: the band's table as ``[band]`` (its months and hours win over
``[time]``'s, a target's own over both), and only the targets listened on it.  A candidate may name the bands it
is built for (``bands``, default every band: a 40 m array whose elements are too tall for 80 m, a 160 m wire), and a
band's table may hold its own ``reference`` antenna (as ``[reference]`` is written) where the file's does not serve
that band (a transmitting vertical too tall for 40 m).  Each goes through the whole pipeline as
it is, so a band's answer is exactly what a file of that band alone gives; the station plan across the bands
(:func:`snrgain.decide.plan.plan_across_bands`) then uses the same statistic as each band's.
"""

from __future__ import annotations

import copy

from snrgain.errors import BandNeededError, ScenarioError
from snrgain.problems import toml_repr

MAX_BANDS = 12


def band_label(table: dict) -> str:
    """A band's name: its ``name``, else its frequency as written."""
    name = table.get("name")
    return str(name) if name is not None else str(table.get("frequency", "?"))


def split_bands(data: dict, label: str = "<scenario>") -> list[tuple[str | None, dict]]:
    """(band name, single-band scenario) for each band of ``data``; a file with one ``[band]`` table gives
    [(None, data)] (its candidates' ``bands`` dropped once checked).  ScenarioError naming the field for bands that
    cannot be told apart, targets or candidates naming bands the file lacks, or a band left without a target or a
    candidate."""
    band = data.get("band")
    if not isinstance(band, list):
        if isinstance(band, dict):
            here = band_label(band)
            problems = [
                (
                    f"{what} {i + 1}.bands",
                    f"no band named {sorted(set(t['bands']) - {here})}; the only band is {here!r}",
                )
                for what in ("target", "candidate")
                for i, t in enumerate(_listed(data, what))
                if isinstance(t, dict) and isinstance(t.get("bands"), list) and set(t["bands"]) - {here}
            ]
            if "reference" in band:
                problems.append(
                    (
                        "band.reference",
                        "a band's own reference is for a file of several bands ([[band]] tables); a file of one band "
                        "writes it as [reference]",
                    )
                )
            if problems:
                raise ScenarioError(label, problems)
            if any(isinstance(c, dict) and "bands" in c for c in _listed(data, "candidate")):
                data = {**data, "candidate": _on_band(_listed(data, "candidate"), here)}
        return [(None, data)]
    names = _check_bands(band, data, label)
    out = []
    for name, table in zip(names, band):
        one = copy.deepcopy(data)
        own = copy.deepcopy(table)  # its months and hours win over [time]'s (ScenarioModel.listening)
        if "reference" in own:  # the band's own reference antenna, in place of [reference]
            one["reference"] = own.pop("reference")
            site, file_ref = one.get("site"), data.get("reference")
            named = isinstance(site, dict) and isinstance(file_ref, dict) and "name" in file_ref
            if named and site.get("transmitting") == file_ref["name"]:
                del site["transmitting"]  # the file's reference is not on this band: the band's takes its place
        one["band"] = own
        for what in ("target", "candidate"):  # a band's own file: its targets and candidates need no band names
            if what in data or what == "target":
                one[what] = _on_band(_listed(data, what), name)
                if not one[what]:
                    said = "no target is listened on" if what == "target" else "no candidate is built for"
                    raise ScenarioError(label, [(f'band "{name}"', f"{said} this band; name it in a {what}'s bands")])
        one = BandData(one)
        kept = [i + 1 for i, c in enumerate(_listed(data, "candidate")) if _on_band([c], name)]
        one.candidate_numbers = tuple(kept) if kept != list(range(1, len(kept) + 1)) else None
        _check_parts_on_band(one, name, label)
        out.append((name, one))
    return out


class BandData(dict):
    """One band's scenario (a dict) with ``candidate_numbers``: each of its candidates' number in the file, where
    some candidates are not built for the band (their ``bands``), so that its problems name them as the file does
    (:func:`renumbered`); None where they are numbered alike."""

    candidate_numbers: tuple[int, ...] | None = None


def renumbered(problems: list[tuple[str, str]], numbers: tuple[int, ...]) -> list[tuple[str, str]]:
    """Problems of one band's scenario with its candidates numbered as in the file (``numbers``: BandData's)."""
    import re

    def fix(text: str) -> str:
        def number(m):
            k = int(m.group(1))
            return f"candidate {numbers[k - 1]}" if 0 < k <= len(numbers) else m.group(0)

        return re.sub(r"\bcandidate (\d+)\b", number, text)

    return [(fix(where), fix(why)) for where, why in problems]


def _listed(data: dict, what: str) -> list:
    """The file's ``[[target]]`` or ``[[candidate]]`` entries (none where the key is missing or not a list)."""
    items = data.get(what)
    return items if isinstance(items, list) else []


def _on_band(items: list, name: str) -> list:
    """The entries listened on (targets) or built for (candidates) band ``name``, without their ``bands`` key."""
    return [
        {k: copy.deepcopy(v) for k, v in t.items() if k != "bands"} if isinstance(t, dict) else t
        for t in items
        if not isinstance(t, dict) or t.get("bands") is None or name in t.get("bands", [])
    ]


def _check_parts_on_band(one: dict, name: str, label: str) -> None:
    """A phasing unit (a candidate naming two antennas in ``antennas``) on a band needs both on that band."""
    here = {c.get("name") for c in _listed(one, "candidate") if isinstance(c, dict)} | {"reference"}
    switched = [f"{c.get('name')} " for c in _listed(one, "candidate") if isinstance(c, dict) and "directions" in c]
    ref = one.get("reference")
    if isinstance(ref, dict):
        here.add(ref.get("name"))

    def on_band(part: str) -> bool:  # an antenna of the band, or a state of a switched one ("<name> NE (45 deg)")
        return part in here or any(part.startswith(prefix) for prefix in switched)

    problems = []
    for c in _listed(one, "candidate"):
        parts = c.get("antennas") if isinstance(c, dict) else None
        if isinstance(parts, list):
            missing = [p for p in parts if isinstance(p, str) and not on_band(p)]
            if missing:
                problems.append(
                    (
                        f"candidate {c.get('name')!r}.antennas",
                        f"{', '.join(map(repr, missing))} is not built for band {name!r} (its bands), while this "
                        "phasing unit is: give the unit the same bands as its antennas",
                    )
                )
    if problems:
        raise ScenarioError(label, problems)


def _check_bands(band: list, data: dict, label: str) -> list[str]:
    """The bands' names of a file of several bands; ScenarioError naming every problem."""
    if not band or len(band) > MAX_BANDS:
        raise ScenarioError(label, [("band", f"give 1 to {MAX_BANDS} [[band]] tables; got {len(band)}")])
    if not all(isinstance(b, dict) for b in band):
        raise ScenarioError(label, [("band", "each [[band]] entry is a table with frequency and bandwidth")])
    names = [band_label(b) for b in band]
    problems = []
    for i, name in enumerate(names):
        if name in names[:i]:
            problems.append((f"band {i + 1}.name", f"{name!r} is already used by band {names.index(name) + 1}"))
        if "reference" in band[i] and not isinstance(band[i]["reference"], dict):
            problems.append(
                (f'band "{name}".reference', "a table of the band's own reference antenna, as [reference] is written")
            )
    for what in ("target", "candidate"):
        for i, t in enumerate(_listed(data, what)):
            wanted = t.get("bands") if isinstance(t, dict) else None
            if wanted is None:
                continue
            if not isinstance(wanted, list) or not wanted or not all(isinstance(w, str) for w in wanted):
                problems.append(
                    (f"{what} {i + 1}.bands", f"a list of band names, e.g. [{names[0]!r}]; got {toml_repr(wanted)}")
                )
                continue
            unknown = sorted(set(wanted) - set(names))
            if unknown:
                problems.append(
                    (f"{what} {i + 1}.bands", f"no band named {unknown}; the bands are {', '.join(map(repr, names))}")
                )
            twice = sorted({w for k, w in enumerate(wanted) if w in wanted[:k]})
            if twice:
                problems.append((f"{what} {i + 1}.bands", f"{', '.join(map(repr, twice))} named twice; name each once"))
    if problems:  # the bands' own tables' problems said with them, not left for a second run
        raise ScenarioError(label, problems + [p for n, b in zip(names, band) for p in _table_problems(n, b)])
    return names


def _table_problems(name: str, table: dict) -> list[tuple[str, str]]:
    """The problems of one [[band]] table on its own, named as loading that band names them."""
    from pydantic import ValidationError

    from snrgain.problems import pydantic_problems

    from .band import BandSection

    try:
        BandSection.model_validate({k: v for k, v in table.items() if k != "reference"})
    except ValidationError as exc:
        return [(f'band "{name}": {where}', why) for where, why in pydantic_problems(exc, "band", table)]
    return []


def one_band(data: dict, band: str | None, label: str = "<scenario>") -> dict:
    """The single-band scenario of ``band`` (a name of ``split_bands``); a file of one band needs none, a file of
    several needs one (ScenarioError naming --band and the bands)."""
    parts = split_bands(data, label)
    if len(parts) == 1 and parts[0][0] is None:
        if band is not None and band != band_label(data.get("band") or {}):
            raise ScenarioError(
                label, [("--band", f"this file has one band ({band_label(data['band'])!r}); got {band!r}")]
            )
        return parts[0][1]
    names = [n for n, _ in parts]
    if band is None:
        raise BandNeededError(
            label,
            [
                (
                    "band",
                    f"this scenario has {len(names)} bands ({', '.join(map(repr, names))}): rank answers them all; "
                    "report, figures, layout and sweep take one, --band NAME; verify, locate, noise-readings and "
                    "calibrate take a file of one band",
                )
            ],
        )
    if band not in names:
        raise ScenarioError(label, [("--band", f"no band named {band!r}; the bands are {', '.join(map(repr, names))}")])
    return parts[names.index(band)][1]


def load_bands(source, *, nside=None, p372_dir=None, reference=None):
    """[(band name, Scenario)] of every band of a scenario (path, TOML text or dict), each loaded as a file of that
    band alone would be; a file of one band gives one entry named by its frequency.  Problems name their band."""
    from .files import read_source
    from .loading import load

    if isinstance(source, dict):
        data, label, base_dir = source, "<dict>", None
    else:
        data, label, base_dir = read_source(source)
    out, found = [], {}
    parts = split_bands(data, label)
    for name, one in parts:
        band = name if name is not None else band_label(one.get("band") or {})
        try:
            sc = load(one, nside=nside, p372_dir=p372_dir, base_dir=base_dir, label=label, reference=reference)
        except ScenarioError as exc:
            if name is None:
                raise
            found[band] = exc.problems
            continue
        out.append((band, sc))
    if found:
        raise ScenarioError(label, band_problems(found, len(parts)))
    return out


def band_problems(found: dict[str, list[tuple[str, str]]], bands: int) -> list[tuple[str, str]]:
    """Each band's problems (band name -> (path, message)) of a file of ``bands`` bands, each said once: one that
    every band has (a table the bands share) without a band, one that some have naming them."""
    where_found: dict[tuple[str, str], list[str]] = {}
    for band, problems in found.items():
        for problem in problems:
            where_found.setdefault(problem, []).append(band)
    out = []
    for (where, why), names in where_found.items():
        if len(names) == bands and not where.startswith("band"):
            out.append((where, why))
        else:
            quoted = ", ".join(f'"{n}"' for n in names)
            out.append((f"band{'s' if len(names) > 1 else ''} {quoted}: {where}", why))
    return out
