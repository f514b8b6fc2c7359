"""The README's section table and `snrgain new`'s starter, tested against the scenario schema so neither drifts.

The schema is snrgain.scenario.ScenarioModel: one field per section, each a pydantic model (a file writes a key by
its alias where it has one: ``from``/``to`` of a sector).  A section's keys include those of the tables it holds
(``keep_out`` items, the ground's constants, a sector, a feed line, a preamplifier).  The reference and the
candidates are antenna tables: their keys are their family's (snrgain.antennas) plus ``chain`` and ``place``.
"""

import re
import tomllib
from typing import get_args, get_origin

import pytest
from pydantic import BaseModel

from snrgain.antennas.base import FAMILIES
from snrgain.scenario import ChainSection, PlaceSection, ScenarioModel, load
from snrgain.scenario.feedline import FeedLineSection
from snrgain.scenario.switched import CANDIDATE_KEYS
from tests.conftest import REPO

README = REPO / "README.md"
STARTER = REPO / "snrgain" / "starter.toml"
ANTENNA_TABLES = {"chain": ChainSection, "place": PlaceSection, "feed_line": FeedLineSection}
"""Tables any antenna may hold besides its family's keys (taken out before the family validates the rest)."""
TOML_WORDS = {"true", "false"}


def _models(annotation) -> list[type[BaseModel]]:
    """The pydantic models a field's type holds (inside lists, unions, tuples, Annotated)."""
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return [annotation]
    return [m for arg in get_args(annotation) for m in _models(arg)]


def _is_list(annotation) -> bool:
    if get_origin(annotation) is list:
        return True
    return any(_is_list(a) for a in get_args(annotation) if a is not type(None))


def own_keys(model: type[BaseModel]) -> set[str]:
    """A model's keys as a file writes them."""
    return {info.alias or name for name, info in model.model_fields.items()}


def all_keys(model: type[BaseModel]) -> set[str]:
    """A model's keys and those of every table it holds, however deep."""
    out = own_keys(model)
    for info in model.model_fields.values():
        for sub in _models(info.annotation):
            out |= all_keys(sub)
    return out


def antenna_keys(family: str | None = None) -> set[str]:
    """The keys an antenna table may hold: one family's (or any family's), and the tables every antenna takes."""
    families = [FAMILIES[family]] if family is not None else list(FAMILIES.values())
    out = set().union(*(all_keys(f.params) for f in families))
    for name, table in ANTENNA_TABLES.items():
        out |= {name} | all_keys(table)
    return out | set(CANDIDATE_KEYS)


def schema_sections() -> dict[str, type[BaseModel] | None]:
    """Every section as a file heads it (``[site]``, ``[[target]]``, ``[noise.man_made]``) -> its model (None: an
    antenna table).  A section whose keys are all sections itself ([noise]) is headed by its sub-sections."""
    out = {}

    def visit(prefix: str, model: type[BaseModel]):
        for name, info in model.model_fields.items():
            key = f"{prefix}{info.alias or name}"
            subs = _models(info.annotation)
            head = f"[[{key}]]" if _is_list(info.annotation) else f"[{key}]"
            if not subs:
                out[head] = None
            elif all(_models(f.annotation) for f in subs[0].model_fields.values()) and not _is_list(info.annotation):
                visit(f"{key}.", subs[0])
            else:
                out[head] = subs[0]

    visit("", ScenarioModel)
    return out


def readme_rows() -> dict[str, str]:
    """The README's section table ("Scenario format"): section -> the text of its row."""
    text = README.read_text(encoding="utf-8")
    part = text.split("\n## Scenario format\n", 1)[1].split("\n## ", 1)[0]
    rows = {}
    for line in part.splitlines():
        m = re.match(r"\| `(\[[^`]+\])` \| (.*) \|$", line)
        if m:
            rows[m.group(1)] = m.group(2)
    return rows


def spans(row: str) -> list[str]:
    return re.findall(r"`([^`]+)`", row)


def named(key: str, row: str) -> bool:
    """Whether a row names a key: a code span that is the key, or writes it in a table (``{ from, to, x = 1 }``,
    ``key = value``)."""
    pattern = re.compile(rf"(?<![\w\"-]){re.escape(key)}\s*(=(?!=)|,|\}})")
    return any(s == key or pattern.search(s) for s in spans(row))


def keys_named(row: str) -> set[str]:
    """The keys a row names: code spans that are a bare key, and ``key =`` inside code spans."""
    out = {s for s in spans(row) if re.fullmatch(r"[a-z][a-z_]*", s) and s not in TOML_WORDS}
    for s in spans(row):
        out |= set(re.findall(r"(?<![\w\"-])([a-z][a-z_]*)\s*=(?!=)", s))
    return out


# -- the README's section table ----------------------------------------------------------------------------


def test_every_section_has_a_readme_row_and_every_row_a_section():
    sections, rows = schema_sections(), readme_rows()
    assert "[noise.man_made]" in sections and "[[noise.local]]" in sections and "[[candidate]]" in sections
    assert sorted(set(sections) - set(rows)) == [], "sections missing from README.md's table"
    assert sorted(set(rows) - set(sections)) == [], "README.md's table has rows for sections the schema lacks"


@pytest.mark.parametrize("section", [s for s, m in schema_sections().items() if m is not None])
def test_the_readme_row_names_every_key_of_its_section(section):
    model, row = schema_sections()[section], readme_rows()[section]
    missing = sorted(k for k in all_keys(model) if not named(k, row))
    assert missing == [], f"README.md's {section} row does not name {missing}"


@pytest.mark.parametrize("section", list(schema_sections()))
def test_the_readme_row_names_only_keys_of_its_section(section):
    model = schema_sections()[section]
    allowed = antenna_keys() if model is None else all_keys(model)
    stale = sorted(keys_named(readme_rows()[section]) - allowed)
    assert stale == [], f"README.md's {section} row names keys the schema lacks: {stale}"


def test_the_drift_checks_can_fail():
    # A key dropped from a row is found; so is one the schema lacks.
    row = readme_rows()["[chain]"]
    assert not named("transformer_loss", row.replace("`transformer_loss`", "transformer loss"))
    assert not named("contrast", "`sector = { from, to }`") and named("contrast", "`sector = { from, to, contrast }`")
    assert keys_named(row + "; `transformer_gain` (`0 dB`)") - all_keys(ChainSection) == {"transformer_gain"}


# -- the starter ---------------------------------------------------------------------------------------------

HEADER = re.compile(r"^(?:#\s*)?(\[\[?[a-z_.]+\]\]?)\s*(#.*)?$")
COMMENTED_KEY = re.compile(r"^#\s?[a-z_]+\s*=(?!=)")


def uncommented(text: str) -> str:
    """The starter with every commented-out key and section header put back in."""
    return "\n".join(
        line[1:].lstrip() if COMMENTED_KEY.match(line) or HEADER.match(line) and line.startswith("#") else line
        for line in text.splitlines()
    )


def starter_keys(text: str) -> list[tuple[int, str, str, dict | None]]:
    """(line, section, key, the antenna table the key is in) for every key the starter writes, in code or in
    comments (``# far_ground = "rod"``, ``# or noise_floor = "-130 dBm"``)."""
    tables = _antenna_tables(tomllib.loads(uncommented(text)))
    out, section, count = [], None, {}
    for n, line in enumerate(text.splitlines(), 1):
        m = HEADER.match(line)
        if m:
            section = m.group(1)
            count[section] = count.get(section, 0) + 1
            continue
        for key in re.findall(r"(?<![\w\"-])([a-z][a-z_]*)\s*=(?!=)", line):
            table = tables.get((section, count.get(section, 0) - 1))
            out.append((n, section, key, table))
    return out


def _antenna_tables(data: dict) -> dict:
    """(section, index) -> antenna table, for the reference and the candidates."""
    out = {("[reference]", 0): data.get("reference", {})}
    out.update({("[[candidate]]", i): c for i, c in enumerate(data.get("candidate", []))})
    return out


def test_the_starter_loads_as_written_and_with_every_commented_key():
    text = STARTER.read_text(encoding="utf-8")
    sc = load(text)
    assert sc.reference.name == "TX vertical" and len(sc.candidates) == 3
    full = uncommented(text)
    assert full != text and "\n[uncertainty]" in full and "\n[[noise.local]]" in full
    sc = load(full)
    assert [s.name for s in sc.noise.local] == ["neighbour's power supply"]
    assert "Beverage toward Europe" in sc.placeable


def test_the_starter_names_only_keys_the_schema_has():
    sections = schema_sections()
    found = starter_keys(STARTER.read_text(encoding="utf-8"))
    assert {k for _, s, k, _ in found if s == "[uncertainty]"} >= {"ground", "hours"}  # commented keys are read
    assert "noise_floor" in {k for _, s, k, _ in found if s == "[receiver]"}  # and keys in comments' prose
    wrong = []
    for line, section, key, table in found:
        if section not in sections:
            wrong.append((line, section, "no such section"))
            continue
        model = sections[section]
        allowed = all_keys(model) if model is not None else antenna_keys(table.get("family", "vertical"))
        if key not in allowed:
            wrong.append((line, section, key))
    assert wrong == [], f"snrgain/starter.toml names keys the schema lacks: {wrong}"


def test_the_starter_check_can_fail():
    text = STARTER.read_text(encoding="utf-8").replace("# hours = true", "# hour = true")
    sections = schema_sections()
    keys = {(s, k) for _, s, k, _ in starter_keys(text)}
    assert ("[uncertainty]", "hour") in keys and "hour" not in all_keys(sections["[uncertainty]"])
