"""Installing like any Python tool: the data files are found through importlib.resources in an
installed package and from the top-level folders in a source checkout; ``--version``; ``python -m
checker``. (CI also builds the wheel, installs it into a fresh environment and runs it: .ci/run.)"""

from __future__ import annotations

import subprocess
import sys
import zipfile
from importlib.metadata import version
from pathlib import Path

from checker import resources
from checker.cli import EXIT_OK, main
from checker.ruleset.loader import load_ruleset, packaged_rules_dir

ROOT = Path(__file__).resolve().parent.parent


def test_a_source_checkout_reads_the_top_level_folders(monkeypatch):
    monkeypatch.delenv("CAPCHECK_RULES", raising=False)
    assert resources.data_dir("rules") == ROOT / "rules"
    assert resources.data_dir("sample_submissions") == ROOT / "sample_submissions"
    assert packaged_rules_dir() == ROOT / "rules"


def test_capcheck_rules_overrides(monkeypatch, tmp_path):
    monkeypatch.setenv("CAPCHECK_RULES", str(tmp_path))
    assert packaged_rules_dir() == tmp_path


def test_outside_a_checkout_the_package_copy_is_used(monkeypatch, tmp_path):
    """Where no project folder surrounds the package (a wheel install), checker/_data is read."""
    monkeypatch.setattr(resources, "SOURCE_ROOT", tmp_path)
    monkeypatch.delenv("CAPCHECK_RULES", raising=False)
    got = resources.data_dir("rules")
    assert got.parts[-3:] == ("checker", "_data", "rules")


def test_data_in_a_zip_is_extracted_once(tmp_path):
    zpath = tmp_path / "pkg.zip"
    with zipfile.ZipFile(zpath, "w") as z:
        z.writestr("checker/_data/rules/a.toml", "x = 1\n")
        z.writestr("checker/_data/rules/profiles/p.toml", "name = 'p'\n")
    res = zipfile.Path(zpath, "checker/_data/rules/")
    got = resources._as_path(res)
    assert (got / "a.toml").read_text() == "x = 1\n"
    assert (got / "profiles" / "p.toml").is_file()
    assert resources._as_path(res) == got


def test_version_option(capsys):
    try:
        main(["--version"])
    except SystemExit as exc:
        assert exc.code == 0
    assert capsys.readouterr().out.strip() == f"capcheck {version('capcheck')}"
    assert resources.version() == version("capcheck")


def test_python_dash_m_checker(tmp_path):
    r = subprocess.run([sys.executable, "-m", "checker", "--version"], capture_output=True, text=True,
                       cwd=tmp_path)
    assert r.returncode == 0 and r.stdout.startswith("capcheck ")
    r = subprocess.run([sys.executable, "-m", "checker", "schema"], capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == EXIT_OK and '"capcheck.findings/1"' in r.stdout


def test_every_profile_loads_from_the_packaged_rules():
    for f in sorted((ROOT / "rules" / "profiles").glob("*.toml")):
        assert load_ruleset(f.stem).rules
