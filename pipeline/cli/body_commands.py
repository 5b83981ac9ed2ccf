"""``blocwatch remove-body``: take one body and everything stored about it out of the store.

Registered on the root group by :mod:`blocwatch.pipeline.cli.main`. Without ``--yes`` it only
lists what would go; with it, the rows go in one transaction under the store's lock.
"""

from __future__ import annotations

import click

from blocwatch.pipeline.cli.common import current_config, handle_errors, resolve_store, store_option


@click.command("remove-body")
@click.argument("name")
@store_option
@click.option("--yes", is_flag=True, default=False,
              help="Remove for real (default: only list what would be removed).")
@handle_errors
def remove_body(name, store_path, yes):
    """Remove the body NAME: its ballots, votes, members, load log and results.

    Runs stay in the run log. A body still configured in blocwatch.toml is loaded again by
    the next rebuild: remove its [bodies] table too.
    """
    from blocwatch.pipeline.ops.lock import locked_store
    from blocwatch.pipeline.store.bodies import body_rows
    from blocwatch.pipeline.store.bodies import remove_body as drop

    with locked_store(resolve_store(store_path), "remove-body", create=False) as store:
        counts = drop(store, name) if yes else body_rows(store, name)
    rows = ", ".join(f"{n} {table}" for table, n in counts.items() if n and table != "bodies")
    if not yes:
        click.echo(f"would remove body {name!r}: {rows or 'no rows besides its name'}")
        click.echo(f"nothing removed — run 'blocwatch remove-body \"{name}\" --yes' to remove it")
        return
    click.echo(f"removed body {name!r}: {rows or 'no rows besides its name'}")
    if name in current_config().bodies:
        click.echo(f"note: blocwatch.toml still has [bodies.\"{name}\"]; the next rebuild loads "
                   "its files again — delete that table too", err=True)


COMMANDS = (remove_body,)
