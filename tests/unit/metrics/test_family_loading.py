"""Families load on first use, in ``registry.FAMILY_MODULES`` order, whatever is imported first
(so readers of the vote codes load no model, and the order is not an accident of imports)."""

import json
import subprocess
import sys

FIRST_USE = """
import json, sys
import blocwatch.metrics.space.positions  # a family module imported out of turn, before the others
from blocwatch.metrics import registry
light = not any(m.startswith("blocwatch.metrics.graph.modularity") for m in sys.modules)
order = [f.func.__module__.removeprefix("blocwatch.metrics.")
         for f in registry.FAMILIES.values()]
print(json.dumps({"light": light, "order": order, "modules": list(registry.FAMILY_MODULES)}))
"""


def test_vote_codes_load_no_family():
    code = ("import sys; from blocwatch.metrics.registry import YES, PeriodInput; "
            "print(sorted(m for m in sys.modules if m.startswith('blocwatch.metrics')))")
    out = subprocess.run([sys.executable, "-c", code], check=True, capture_output=True,
                         text=True, timeout=120).stdout
    assert json.loads(out.replace("'", '"')) == [
        "blocwatch.metrics", "blocwatch.metrics.reference", "blocwatch.metrics.registry"]


def test_families_follow_the_module_list_whatever_is_imported_first():
    out = subprocess.run([sys.executable, "-c", FIRST_USE], check=True, capture_output=True,
                         text=True, timeout=120).stdout
    found = json.loads(out)
    assert found["light"]  # importing positions alone did not load modularity
    seen = list(dict.fromkeys(found["order"]))  # one module can register several families
    assert seen == found["modules"]
