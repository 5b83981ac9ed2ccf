"""Escaping of user strings in HTML text and in JSON placed inside <script> elements."""

import json

from hypothesis import given
from hypothesis import strategies as st

from blocwatch.dashboards.pages.safe import esc, script_json


def test_esc_escapes_markup_and_quotes():
    assert esc("<img src=x onerror=alert(1)>") == "&lt;img src=x onerror=alert(1)&gt;"
    assert esc("a\"b'c&") == "a&quot;b&#x27;c&amp;"  # [S: python html.escape docs]
    assert esc(None) == ""


def test_script_json_cannot_close_the_script_element():
    text = script_json({"group": "</script><script>window.__pwned=1</script><!-- -->"})
    assert "</" not in text and "<!--" not in text and "<" not in text
    assert json.loads(text) == {"group": "</script><script>window.__pwned=1</script><!-- -->"}


@given(st.text())
def test_script_json_round_trips_any_text(s):
    text = script_json(json.dumps({"s": s}))
    assert "</" not in text.lower() and "<!--" not in text
    assert json.loads(text) == {"s": s}
