"""blocwatch.toml: init writes the defaults, every flag can come from it, flags win, and a bad
key or value is one usage error naming the key and what is allowed."""

import os
import tomllib

import click
import pytest
from click.testing import CliRunner

from blocwatch.pipeline.cli.flags import default_map, flag_key, flag_sections
from blocwatch.pipeline.cli.main import cli
from blocwatch.pipeline.config import body_sources, read_config
from blocwatch.pipeline.errors import UsageError


def run(*args, cwd, env=None):
    old = os.getcwd()
    os.chdir(cwd)
    try:
        return CliRunner().invoke(cli, list(args), env=env)
    finally:
        os.chdir(old)


def write(folder, text):
    (folder / "blocwatch.toml").write_text(text, encoding="utf-8")
    return folder / "blocwatch.toml"


def test_init_writes_every_build_default(tmp_path):
    result = run("init", str(tmp_path / "proj"), "--body", "Test Chamber", cwd=tmp_path)
    assert result.exit_code == 0, result.output
    data = tomllib.loads((tmp_path / "proj" / "blocwatch.toml").read_text())
    # The reference is the command itself: each [build] value is the flag's own default.
    build = {flag_key(p): p.default for p in cli.commands["build"].params
             if isinstance(p, click.Option) and p.default is not None
             and p.name not in ("store_path", "help", "body")}
    assert data["build"] == build
    assert data["store"] == "blocwatch.duckdb" and data["output"] == "blocwatch-report"
    assert data["bodies"]["Test Chamber"]["sources"] == ["data/votes*.csv"]
    assert (tmp_path / "proj" / "data").is_dir()
    # and the file it wrote is accepted as it is
    cfg = read_config(tmp_path / "proj" / "blocwatch.toml", sections=flag_sections(cli))
    assert default_map(cfg, cli)["build"]["bootstrap"] == build["bootstrap"]


def test_init_without_body_leaves_the_example_commented(tmp_path):
    assert run("init", ".", cwd=tmp_path).exit_code == 0
    data = tomllib.loads((tmp_path / "blocwatch.toml").read_text())
    assert "bodies" not in data


def test_init_refuses_to_overwrite(tmp_path):
    write(tmp_path, "# mine\n")
    result = run("init", ".", cwd=tmp_path)
    assert result.exit_code == 2 and "already exists" in result.stderr
    assert (tmp_path / "blocwatch.toml").read_text() == "# mine\n"
    assert run("init", ".", "--force", cwd=tmp_path).exit_code == 0


@pytest.mark.parametrize("text,key,allowed", [
    ("[build]\nbootsrap = 5\n", "build.bootsrap", "bootstrap"),
    ("[build]\nbootstrap = -1\n", "build.bootstrap", "an integer with x>=0"),
    ("[build]\nkeep_unanimous = \"yes\"\n", "build.keep_unanimous", "true or false"),
    ("[build]\nrule = \"nearest\"\n", "build.rule", "weighted"),
    ("[build]\nperiod = \"decade\"\n", "build.period", "rolling"),
    ("[build]\nmin_share_cast = 2.0\n", "build.min_share_cast", "a number with 0<=x<=1"),
    ("[export]\nformat = \"xml\"\n", "export.format", "csv, parquet, json"),
    ("[rebuild]\nfull = true\n", "rebuild.full", "images"),
    ("srore = \"x.duckdb\"\n", "srore", "store, output"),
    ("store = 5\n", "store", "a path"),
    ("[colours]\nTeal = \"url(javascript:x)\"\n", "colours.Teal", "CSS colour"),
    ("[bodies.A]\nlayout = \"long\"\n", "bodies.A.sources", "glob"),
    ("[bodies.A]\nsources = \"*.csv\"\nlayout = \"diagonal\"\n", "bodies.A.layout", "long"),
    ("[bodies.A]\nsources = \"*.csv\"\nroster = \"r.csv\"\n", "bodies.A.roster", "members"),
    ("[schedule]\nat = 317\n", "schedule.at", "text in quotes"),
    ("[schedule]\nat = \"25:00\"\n", "schedule.at", "03:17"),
])
def test_bad_config_is_one_usage_error_naming_key_and_allowed(tmp_path, text, key, allowed):
    write(tmp_path, text)
    result = run("status", cwd=tmp_path)
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: config ")
    assert f"key {key!r}" in lines[0]
    if allowed:
        assert "allowed: " in lines[0] and allowed in lines[0].split("allowed: ", 1)[1]


def test_invalid_toml_is_a_usage_error(tmp_path):
    write(tmp_path, "[build\n")
    result = run("status", cwd=tmp_path)
    assert result.exit_code == 2 and "is not valid TOML" in result.stderr


def test_flags_come_from_config_and_command_line_wins(tmp_path):
    cfg_text = ('[build]\nperiod = "rolling:24m:12m"\nbootstrap = 7\nkeep_unanimous = true\n'
                '[export]\nformat = "json"\n')
    cfg = read_config(write(tmp_path, cfg_text), sections=flag_sections(cli))
    dm = default_map(cfg, cli)
    # [build] feeds build and the commands that share its flags
    for command in ("build", "rebuild", "status"):
        assert dm[command]["period"] == "rolling:24m:12m"
        assert dm[command]["bootstrap"] == 7 and dm[command]["keep_unanimous"] is True
    assert dm["export"]["fmt"] == "json"
    assert "period" not in dm.get("report", {})
    # click uses default_map only for flags that were not given
    ctx = cli.make_context("blocwatch", ["status"])
    ctx.default_map = dm
    sub = cli.commands["status"].make_context("status", ["--bootstrap", "3"], parent=ctx)
    assert sub.params["bootstrap"] == 3 and sub.params["period"] == "rolling:24m:12m"


def test_store_and_paths_are_relative_to_the_config_file(tmp_path):
    proj = tmp_path / "proj"
    (proj / "data").mkdir(parents=True)
    (proj / "data" / "votes-1.csv").write_text("x\n")
    (proj / "data" / "votes-2.csv").write_text("x\n")
    (proj / "data" / "other.csv").write_text("x\n")
    cfg_path = write(proj, 'store = "db/s.duckdb"\noutput = "out"\n'
                           '[bodies."Test Chamber"]\nsources = ["data/votes-*.csv", '
                           '"data/votes-1.csv"]\n')
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    result = run("--config", str(cfg_path), "status", cwd=elsewhere)
    assert result.exit_code == 0, result.output
    assert f"store: {proj / 'db' / 's.duckdb'}" in result.output
    files = body_sources("Test Chamber", read_config(cfg_path))
    assert files == [proj / "data" / "votes-1.csv", proj / "data" / "votes-2.csv"]
    # the environment variable names the config too
    result = run("status", cwd=elsewhere, env={"BLOCWATCH_CONFIG": str(cfg_path)})
    assert f"store: {proj / 'db' / 's.duckdb'}" in result.output


def test_single_body_gives_ingest_its_defaults(tmp_path):
    cfg = read_config(write(tmp_path, '[bodies."Test Chamber"]\nsources = "v.csv"\n'
                                   'members = "r.csv"\ncolumns = { member = "MP" }\n'),
                   sections=flag_sections(cli))
    dm = default_map(cfg, cli)["ingest"]
    assert dm["body"] == "Test Chamber"
    assert dm["members"] == str(tmp_path / "r.csv")
    assert dm["columns"] == ("member=MP",)


def test_missing_named_config_is_an_error(tmp_path):
    result = run("--config", str(tmp_path / "nope.toml"), "status", cwd=tmp_path)
    assert result.exit_code == 2 and "does not exist" in result.stderr


def test_library_check_raises_usage_error(tmp_path):
    with pytest.raises(UsageError, match="bodies.A.replace"):
        read_config(write(tmp_path, '[bodies.A]\nsources = "x"\nreplace = "yes"\n'))


def test_demo_ignores_the_project_config(tmp_path):
    """The demo makes its own project: a broken blocwatch.toml around it does not matter."""
    write(tmp_path, "[build\n")
    ctx = cli.make_context("blocwatch", ["demo", "--help"], resilient_parsing=True)
    from blocwatch.pipeline.cli.flags import apply_config

    ctx.invoked_subcommand = "demo"
    cfg = apply_config(ctx, str(tmp_path / "blocwatch.toml"))
    assert cfg.path is None and cfg.data == {}
