"""The command line's edges: JSON alone on stdout, the caution on every output, --version, help on every option."""
import argparse
import json
import subprocess
import sys

import pytest

from cordmap import __version__, cautions
from cordmap.cli import build_parser, main


def run(*args):
    return subprocess.run([sys.executable, "-m", "cordmap", *args], capture_output=True, text=True)


def test_demo_json_is_json_alone_on_stdout():
    r = run("demo", "--json", "--show", "2")
    assert r.returncode == 0
    doc = json.loads(r.stdout)  # the whole of stdout parses (cordmap demo --json | python -m json.tool)
    assert doc["format"] == "cordmap-ranking/1" and doc["cautions"]
    assert "invented" in r.stderr  # the case line went to stderr
    piped = subprocess.run(f"{sys.executable} -m cordmap demo --json --show 1 | {sys.executable} -m json.tool",
                           shell=True, capture_output=True, text=True)
    assert piped.returncode == 0, piped.stderr


@pytest.mark.parametrize("command", ["rank", "classify"])
def test_json_outputs_parse_and_carry_a_caution(tmp_path, command):
    from cordmap import Lesion, simulate

    path = tmp_path / "case.json"
    path.write_text(simulate(Lesion("hemisection", "left", "T6")).to_json())
    r = run(command, str(path), "--json")
    assert r.returncode == 0 and r.stderr == ""
    doc = json.loads(r.stdout)
    caution = doc.get("caution") or " ".join(doc.get("cautions", []))
    assert "Decision support, not a diagnosis" in caution


def test_classify_text_prints_the_caution_once(tmp_path):
    from cordmap import Lesion, simulate

    path = tmp_path / "case.json"
    path.write_text(simulate(Lesion("complete", "both", "T8")).to_json())
    r = run("classify", str(path))
    assert r.returncode == 0 and r.stdout.count("Decision support, not a diagnosis") == 1


def test_simulate_document_carries_the_caution_and_reads_back(capsys, tmp_path):
    from cordmap import rank

    assert main(["simulate", "hemisection", "--side", "left", "--rostral", "T6", "--json"]) == 0
    captured = capsys.readouterr()
    doc = json.loads(captured.out)
    assert doc["caution"] == cautions.BANNER and captured.err == ""
    path = tmp_path / "sim.json"
    path.write_text(captured.out)
    assert rank(path, top=1, next_tests=0).best.lesion.pattern == "hemisection"  # the caution field is accepted


def test_version():
    r = run("--version")
    assert r.returncode == 0 and r.stdout.strip() == f"cordmap {__version__}"


def _options(parser: argparse.ArgumentParser):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                for opt in _options(sub):
                    yield (name, *opt[1:])
        else:
            yield ("cordmap", action.dest, action.help)


def test_every_option_has_a_help_line():
    missing = [(cmd, dest) for cmd, dest, text in _options(build_parser()) if not text or text == argparse.SUPPRESS]
    assert missing == []


def test_demo_help_lists_the_demo_cases():
    from cordmap import demo

    r = run("demo", "--help")
    assert r.returncode == 0
    for name, label in demo.labels().items():
        assert name in r.stdout and label in r.stdout
