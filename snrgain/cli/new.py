"""``snrgain new``: write a commented starter scenario."""

from __future__ import annotations

from importlib.resources import files

import click

from snrgain.cli.options import handle_errors, overwrite_option


def starter_text() -> str:
    return files("snrgain").joinpath("starter.toml").read_text(encoding="utf-8")


@click.command("new")
@click.argument("path", type=click.Path(dir_okay=False, path_type=str))
@overwrite_option
@handle_errors
def new(path, overwrite):
    """Write a commented starter scenario to PATH ('-' for standard output)."""
    from snrgain.files import write_atomic

    text = starter_text()
    if path == "-":
        click.echo(text, nl=False)
        return
    write_atomic(path, text, overwrite=overwrite)
    click.echo(f"wrote {path}; edit it, then run: snrgain check {path}", err=True)
