"""Escaping for the two places user strings land: HTML text and JSON inside ``<script>``.

Body, member, group and ballot names come from the user's files. In HTML they are escaped with
``html.escape``. Chart text (trace names, hover text, tick labels) is rendered by plotly.js,
which interprets a subset of HTML tags, so those strings are escaped too (plotly shows the
entities as the original characters). JSON embedded in a page is made unable to close its
``<script>`` element or open an HTML comment: every ``<``, ``>`` and ``&`` becomes a ``\\u``
escape, which JSON parsers read back unchanged.
"""

from __future__ import annotations

import html
import json
from typing import Any

_SCRIPT_SAFE = {"<": "\\u003c", ">": "\\u003e", "&": "\\u0026",
                "\u2028": "\\u2028", "\u2029": "\\u2029"}


def esc(text: Any) -> str:
    """HTML-escape any value shown as text (quotes too, so it is safe in attributes).

    >>> esc('<img src=x onerror=alert(1)>')
    '&lt;img src=x onerror=alert(1)&gt;'
    """
    return html.escape("" if text is None else str(text), quote=True)


def script_json(text_or_obj: Any) -> str:
    """JSON text safe to place between ``<script ...>`` and ``</script>``.

    Accepts a JSON string (e.g. ``fig.to_json()``) or an object to serialise.

    >>> script_json({"g": "</script><!--"})
    '{"g": "\\\\u003c/script\\\\u003e\\\\u003c!--"}'
    """
    text = text_or_obj if isinstance(text_or_obj, str) else json.dumps(text_or_obj)
    for raw, escaped in _SCRIPT_SAFE.items():
        text = text.replace(raw, escaped)
    return text
