"""Where the ITU-R P.372 coefficient files are: the folder the command line, the scenario or the environment names,
in that order, checked month by month."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from .model import ScenarioModel


def p372_dir_named(option, key=None, base_dir: Path | None = None) -> tuple[Path, str] | None:
    """The P.372 data folder and what named it, in this order: the command line's ``--p372-dir`` (``option``; a
    command-line option wins over a file and an environment variable), the scenario key noise.atmospheric.data_dir
    (``key``, relative to the scenario's folder ``base_dir``), $SNRGAIN_P372_DIR.  None when none names one."""
    import os

    from noisemodels import p372_maps

    if option is not None:
        return Path(option).expanduser(), "--p372-dir"
    if key is not None:
        p = Path(key).expanduser()
        return (p if p.is_absolute() or base_dir is None else base_dir / p), "noise.atmospheric.data_dir"
    if os.environ.get(p372_maps.ENV_VAR):
        return Path(os.environ[p372_maps.ENV_VAR]), f"${p372_maps.ENV_VAR}"
    return None


def check_p372_dir(chosen: tuple[Path, str], months) -> Path:
    """The folder of :func:`p372_dir_named`, each month's file checked; a P372DataError names the file and section at
    fault and what named the folder."""
    from noisemodels import p372_maps

    folder, source = chosen
    try:
        for month in months:
            p372_maps.check_month(month, folder)  # raises naming the file and section at fault
    except p372_maps.P372DataError as exc:
        raise p372_maps.P372DataError(f"the folder {source} names: {exc}") from None
    return folder


NO_FOLDER_TEXT = "P.372 atmospheric noise is asked for, but no data folder is set. "
"""How the problem of a scenario asking for P.372 data with no folder named begins (a copy of such a scenario that
changes nothing of its noise may still be written: snrgain.cli.options.readings_preamble)."""


def find_p372_dir(model: ScenarioModel, base_dir: Path | None, option) -> Path:
    """Resolve and check the P.372 data folder: --p372-dir, then the scenario key, then $SNRGAIN_P372_DIR
    (:func:`p372_dir_named`)."""
    from noisemodels import p372_maps

    chosen = p372_dir_named(option, model.noise.atmospheric.data_dir, base_dir)
    if chosen is None:
        raise p372_maps.P372DataError(NO_FOLDER_TEXT + p372_maps.HOW_TO_GET)
    return check_p372_dir(chosen, model.listening.months)
