"""Project-level promises: the README's commands and what CI runs."""

import pathlib
import re

ROOT = pathlib.Path(__file__).resolve().parent.parent


def _fenced_commands(text: str) -> list[str]:
    return re.findall(r"```sh\n(.+?)\n```", text, flags=re.S)


def test_ci_runs_the_readme_test_command_verbatim():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    test_command = _fenced_commands(readme)[1]
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert ci.count(test_command) == 2  # once on SQLite, once on PostgreSQL
    assert "DATABASE_URL=postgresql://postgres@127.0.0.1:5432/test" in ci


def test_the_readme_opens_with_the_job_then_the_run_and_test_commands():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    run, test = _fenced_commands(readme)[:2]
    assert "demo_lab" in run and "runserver 127.0.0.1:8000" in run
    assert "catalogue_seed" in run and "migrate" in run
    assert "pytest" in test and ".[test]" in test
    assert readme.index("witness pieces") < readme.index(run)


def test_the_code_passes_the_linter():
    """ruff with the project's rules (pyproject.toml); the house style asks for it."""
    import shutil
    import subprocess
    import sys

    ruff = shutil.which("ruff") or str(pathlib.Path(sys.executable).with_name("ruff"))
    result = subprocess.run([ruff, "check", "."], cwd=ROOT, capture_output=True, text=True,
                            timeout=120)
    assert result.returncode == 0, result.stdout + result.stderr
