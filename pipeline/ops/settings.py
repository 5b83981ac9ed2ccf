"""Which build settings differ from the ones the stored results were computed with.

``status`` judges staleness with the settings in force now (flags, else ``[build]`` in
``blocwatch.toml``, else the defaults). When those differ from the settings of the last build,
every period looks changed; :func:`settings_changes` names each setting that differs, the value
the results were computed with, the value now and where the new value came from, so the user
can tell "the data changed" from "I ran the last build with other flags".
"""

from __future__ import annotations

import json
from dataclasses import dataclass

from blocwatch.pipeline.options import BuildOptions

# flattened setting -> the flag that sets it (drop_unanimous is the inverse of the flag)
FLAGS = {
    "period": "--period", "rule": "--rule", "seed": "--seed", "bootstrap": "--bootstrap",
    "permutations": "--permutations", "expensive_replicates": "--expensive-replicates",
    "abstain_as_position": "--abstain-as-position", "min_shared": "--min-shared",
    "drop_unanimous": "--keep-unanimous", "lopsided": "--lopsided",
    "min_share_cast": "--min-share-cast", "measure": "--agreement",
}
# the click parameter name of each setting (to ask click where its value came from)
PARAMS = {**{k: k for k in FLAGS}, "drop_unanimous": "keep_unanimous", "measure": "agreement"}


@dataclass(frozen=True)
class SettingChange:
    setting: str  # the config key / flag name, e.g. "bootstrap"
    then: object  # the value the stored results were computed with
    now: object  # the value status judges with
    source: str  # where ``now`` came from: "the command line", "blocwatch.toml", "the default"

    def text(self) -> str:
        return f"{self.setting} {_show(self.then)} then, {_show(self.now)} now ({self.source})"


def _show(value) -> str:
    return json.dumps(value) if isinstance(value, str) else str(value).lower() \
        if isinstance(value, bool) else str(value)


def _flat(params: dict) -> dict:
    flat = {k: v for k, v in params.items() if k not in ("agreement", "body")}
    flat.update(params.get("agreement", {}))
    return flat


def _key(setting: str) -> str:
    """The name a user writes: ``keep_unanimous`` rather than the stored ``drop_unanimous``."""
    return PARAMS.get(setting, setting)


def settings_changes(last_params: dict, now: BuildOptions,
                     sources: dict[str, str] | None = None) -> list[SettingChange]:
    """Each setting whose value ``now`` differs from ``last_params`` (a run's stored params).

    ``sources`` maps a click parameter name to where its value came from; absent names are
    reported as "now".
    """
    then, current = _flat(BuildOptions.from_params(last_params).params()), _flat(now.params())
    out = []
    for setting in FLAGS:
        if setting in then and then[setting] != current.get(setting):
            a, b = then[setting], current.get(setting)
            if setting == "drop_unanimous":  # shown as the flag the user types
                a, b = not a, not b
            out.append(SettingChange(_key(setting), a, b,
                                     (sources or {}).get(PARAMS[setting], "now")))
    return out
