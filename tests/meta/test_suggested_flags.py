"""Every flag an error message suggests exists on the command that can print it.

The messages are read from the source (``ast``: string literals and the fixed parts of
f-strings in ``pipeline/``). Flags inside a quoted command (``'blocwatch ingest --check'``) must
exist on that command; the others on every command whose run reaches the module (``SCOPES``).
Ingest's messages also reach ``rebuild``, which rewrites them into config keys
(:func:`~blocwatch.pipeline.ops.scan_load.config_fix`): what is left must be a rebuild flag.
"""

import ast
import re
from pathlib import Path

import pytest

from blocwatch.pipeline.cli.main import cli
from blocwatch.pipeline.config import Config
from blocwatch.pipeline.ops.scan_load import config_fix

ROOT = Path(__file__).resolve().parents[2]
PIPELINE = ROOT / "pipeline"
# module path prefix -> commands whose runs print its messages (first match wins)
SCOPES = [
    ("ingest/", ("ingest",)),
    ("build/executors.py", ("build",)),
    ("build/partitions.py", ("build",)),
    ("build/", ("build", "rebuild", "status")),
    ("report/export.py", ("export",)),
    ("ops/rebuild.py", ("rebuild",)),
    ("ops/scan_load.py", ("rebuild",)),
    ("ops/schedule.py", ("schedule",)),
    ("store/specs.py", ("export", "report")),  # which stored spec a reader shows
    ("store/", ("export", "report", "status", "build", "ingest", "rebuild")),
    ("cli/usage.py", ()),  # builds its hints from the command that failed
    ("", ()),  # elsewhere: the flag must exist on some command (checked below)
]
FLAG = re.compile(r"(?<![\w-])--[a-z][a-z-]+")
QUOTED = re.compile(r"'blocwatch ([a-z-]+)([^']*)'")


def _flags(command: str | None) -> set[str]:
    root = {"--help", "--version"} | {o for p in cli.params for o in p.opts}
    if command is None:
        return root
    return root | {o for p in cli.commands[command].params for o in p.opts}


ALL_FLAGS = set().union(*(_flags(c) for c in cli.commands))


_RAISER = re.compile(r"(Error|_error|Problem|_problem)$")


def _strings(node: ast.AST) -> list[str]:
    """String literals under ``node``, each f-string's fixed parts joined around ``{}``."""
    inner = {id(v) for n in ast.walk(node) if isinstance(n, ast.JoinedStr) for v in n.values}
    out = []
    for sub in ast.walk(node):
        if isinstance(sub, ast.JoinedStr):
            out.append("".join(v.value if isinstance(v, ast.Constant) else "{}"
                               for v in sub.values))
        elif isinstance(sub, ast.Constant) and isinstance(sub.value, str) \
                and id(sub) not in inner:
            out.append(sub.value)
    return out


def _texts(path: Path) -> list[str]:
    """The text of every error built in ``path`` (calls of ``…Error``, ``…Problem`` and the
    like, and ``fix = …`` texts set aside for several of them), where a suggested flag would
    be."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Call):
            name = getattr(node.func, "id", getattr(node.func, "attr", ""))
            if _RAISER.search(name):
                out += _strings(node)
        elif isinstance(node, ast.Assign) and any(
                isinstance(t, ast.Name) and t.id.endswith("fix") for t in node.targets):
            out += _strings(node.value)
    return [t for t in out if "--" in t]


def _modules():
    return sorted(p for p in PIPELINE.rglob("*.py"))


def _scope(path: Path) -> tuple[str, ...]:
    rel = path.relative_to(PIPELINE).as_posix()
    return next(cmds for prefix, cmds in SCOPES if rel.startswith(prefix))


def _problems(text: str, commands: tuple[str, ...]) -> list[str]:
    bad = []
    for command, rest in QUOTED.findall(text):
        if command not in cli.commands:
            bad.append(f"'blocwatch {command}' is not a command")
            continue
        bad += [f"{f} (in 'blocwatch {command}')" for f in FLAG.findall(rest)
                if f not in _flags(command)]
    loose = QUOTED.sub("", text)
    for flag in FLAG.findall(loose):
        if not commands and flag not in ALL_FLAGS:
            bad.append(f"{flag} (no command has it)")
        bad += [f"{flag} (not on '{c}')" for c in commands if flag not in _flags(c)]
    return bad


@pytest.mark.parametrize("path", _modules(), ids=lambda p: p.relative_to(PIPELINE).as_posix())
def test_suggested_flags_exist(path):
    problems = [(t, _problems(t, _scope(path))) for t in _texts(path)]
    assert not [p for p in problems if p[1]], problems


def test_ingest_messages_read_by_rebuild_name_config_keys():
    cfg = Config(Path("/p/blocwatch.toml"), {})
    checked = 0
    for path in sorted((PIPELINE / "ingest").rglob("*.py")):
        for text in _texts(path):
            fixed = config_fix(text, "Council", cfg)
            assert not _problems(fixed, ("rebuild",)), (path.name, text, fixed)
            checked += "--replace" in text
    assert checked >= 3  # the conflict messages were among them


def test_config_fix_names_the_body_table():
    cfg = Config(Path("/p/blocwatch.toml"), {})
    fixed = config_fix("pass --replace to overwrite, or run 'blocwatch ingest --check' first",
                       "Town Board", cfg)
    assert fixed == ('set replace = true in [bodies."Town Board"] of /p/blocwatch.toml to '
                     "overwrite, or run 'blocwatch ingest --check' first")


def test_the_checker_catches_a_missing_flag():
    """Negative control: a rebuild message suggesting --replace is caught."""
    assert _problems("pass --replace to overwrite", ("rebuild",))
    assert _problems("run 'blocwatch rebuild --replace'", ())
    assert not _problems("run 'blocwatch ingest --replace'", ())


def test_the_scan_reads_the_messages():
    """The source scan finds the error texts that suggest flags (it is not vacuous)."""
    assert sum(len(_texts(p)) for p in _modules()) >= 25
