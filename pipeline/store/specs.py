"""Which period spec a reader shows, when the store holds results of several side by side.

``report`` and ``export`` take ``--period SPEC``; without it they show the spec ``build``
would cut by default (``[build] period`` of blocwatch.toml, else ``year``) when the store
holds it, else the only spec stored; with several stored and none of them the default, they
stop and list what is stored. Each says which spec it used and why.
"""

from __future__ import annotations

from dataclasses import dataclass

from blocwatch.pipeline.errors import StoreError, UsageError
from blocwatch.pipeline.store.bodies import close_matches
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import stored_specs


@dataclass(frozen=True)
class SpecChoice:
    spec: str
    why: str  # how it was chosen, for the line the command prints
    others: tuple[str, ...] = ()  # the other specs stored (kept, not shown)

    def line(self) -> str:
        """``period spec: 'year' (the default …); also stored: 'rolling:12m:6m' — …``."""
        also = (f"; also stored: {', '.join(map(repr, self.others))} — show one with --period "
                "SPEC") if self.others else ""
        return f"period spec: {self.spec!r} ({self.why}){also}"


def _listing(stored: dict[str, int]) -> str:
    return ", ".join(f"{s!r} ({n} period{'s' if n != 1 else ''})" for s, n in stored.items())


def choose_spec(store: Store, bodies: list[str], *, wanted: str | None,
                default: str, default_why: str) -> SpecChoice:
    """The spec to show for ``bodies``: ``wanted`` (``--period``), else ``default`` (the spec
    ``build`` cuts by default, ``default_why`` says where it is set) if stored, else the only
    one stored. Raises with what is stored when none of these applies."""
    stored = stored_specs(store, bodies)
    if not stored:
        which = "the store" if len(bodies) != 1 else f"body {bodies[0]!r}"
        raise StoreError(which, "has ballots but no results yet",
                         "run 'blocwatch build' (or 'blocwatch rebuild') first")

    def choice(spec: str, why: str) -> SpecChoice:
        return SpecChoice(spec, why, tuple(s for s in stored if s != spec))

    if wanted is not None:
        if wanted in stored:
            return choice(wanted, "chosen with --period")
        near = close_matches(wanted, list(stored), n=1)
        hint = f"did you mean {near[0]!r}? " if near else ""
        raise UsageError(f"--period {wanted}", "has no stored results",
                         f"{hint}the store holds {_listing(stored)}; or compute it with "
                         f"'blocwatch build --period {wanted}'")
    if default in stored:
        return choice(default, default_why)
    if len(stored) == 1:
        only = next(iter(stored))
        return choice(only, f"the only period spec stored; {default_why}, {default!r}, has "
                            "no results")
    raise UsageError("period spec", f"the store holds results of {len(stored)} period specs, "
                     f"none of them {default!r} ({default_why})",
                     f"pass --period with one of: {_listing(stored)}")
