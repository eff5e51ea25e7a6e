"""Hostile and huge input is refused quickly, inside the error family, with no traceback.

Each input runs in a child process with a memory cap (2 GiB of address space) and a time
limit; a hang, a crash or a foreign exception fails the test. The limits themselves are in
derivpad/core/parse.py (LIMITS) and docs/input-syntax.md.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

import pytest

REST = '{"y(0)": 0, "y\'(0)": 0}'
EQ = "y'' + y = "

# (label, Python call text run in the child) — each must raise a DerivpadError
HOSTILE = [
    ("huge literal power", f'derive("{EQ}1e999999999**99999999", ics={REST})'),
    ("tower of powers", f'derive("{EQ}9^9^9", ics={REST})'),
    ("exact decimal tower", f'derive("{EQ}10**10**10", ics={REST})'),
    ("400 brackets", f'derive("{EQ}" + "(" * 400 + "1" + ")" * 400, ics={REST})'),
    ("2000 brackets", f'derive("{EQ}" + "(" * 2000 + "1" + ")" * 2000, ics={REST})'),
    ("500 nested functions", f'derive("{EQ}" + "sin(" * 500 + "t" + ")" * 500, ics={REST})'),
    ("3000 signs", f'derive("{EQ}" + "-" * 3000 + "1", ics={REST})'),
    ("t to a million", f'derive("{EQ}t^1000000", ics={REST})'),
    ("order 1000", 'derive("y^(1000) + y = 1", ics={})'),
    ("order 40 with its conditions",
     'derive("y^(40) + y = u(t)", ics={f"y^({k})(0)" if k > 3 else "y" + "\'" * k + "(0)": 0 '
     'for k in range(40)})'),
    ("literal 1e999999999", f'derive("{EQ}1e999999999", ics={REST})'),
    ("literal 1e400", f'derive("{EQ}1e400*u(t)", ics={REST})'),
    ("parameter 1e999999999 N/m",
     f'derive("m*y\'\' + k*y = u(t)", ics={REST}, params={{"m": 1, "k": "1e999999999 N/m"}})'),
    ("unit kg**99999999999",
     f'derive("m*y\'\' + k*y = u(t)", ics={REST}, params={{"m": "1 kg**99999999999", "k": 1}})'),
    ("text nan", f'derive("{EQ}nan", ics={REST})'),
    ("parameter inf", f'derive("k*y\'\' + y = 1", ics={REST}, params={{"k": "inf"}})'),
    ("float nan", f'derive("k*y\'\' + y = 1", ics={REST}, params={{"k": float("nan")}})'),
    ("initial conditions as a list", f'derive("{EQ}u(t)", ics=[0, 0])'),
    ("negative under a root", f'derive("y\'\' + sqrt(k)*y = u(t)", ics={REST}, values={{"k": -4}})'),
    ("window NaN", f'derive("{EQ}u(t)", ics={REST}, window=float("nan"))'),
    ("window -5", f'derive("{EQ}u(t)", ics={REST}, window=-5)'),
    ("Bengali digit", f'derive("{EQ}\\u09e8", ics={REST})'),
    ("fullwidth digit", f'derive("{EQ}\\uff12", ics={REST})'),
    ("a very long equation", f'derive("{EQ}" + "+".join(["t"] * 4000), ics={REST})'),
    ("critical damping exactly via values=",
     f'derive("m*y\'\' + c*y\' + k*y = u(t)", ics={REST}, values={{"m": 1, "c": 2, "k": 1}})'),
    ("resonance exactly via values=",
     f'derive("y\'\' + k*y = sin(w*t)", ics={REST}, values={{"k": 4, "w": 2}})'),
    ("a value that is no number", f'derive("m*y\'\' + y = 1", ics={REST}, values={{"m": "abc"}})'),
    ("a root of a negative number", f'derive("y\'\' + sqrt(-4)*y = 1", ics={REST})'),
    ("zero to a negative power", f'derive("{EQ}0^(-1)", ics={REST})'),
    ("a load table of 10,000 points",
     f'derive("y\'\' + y = F", ics={REST}, params={{"F": forcing.table([(i / 100, i % 7) '
     'for i in range(10000)])})'),
    ("400 switching times", 'derive("y\' + y = " + "+".join(f"u(t-{i})" for i in range(400)), '
     'ics={"y(0)": 0})'),
    ("a tolerance that is no number",
     f'derive("{EQ}u(t)", ics={REST}, tolerances={{"integration": "x"}})'),
    ("a record of strings", f'derive("y\'\' + y = F", ics={REST}, params={{"F": '
     'forcing.history(["a", "b"], [1, 2])})'),
    ("a record as a nested array", f'derive("y\'\' + y = F", ics={REST}, params={{"F": '
     'forcing.history([[0, 1], [2, 3]], [[1, 2], [3, 4]])})'),
    ("a record of 30 million points", 'forcing.history(range(30_000_000), range(30_000_000))'),
    ("a record with an infinite value", 'forcing.history([0, 1], [0, float("inf")])'),
    ("a record of one point", 'forcing.history([0], [1])'),
    ("a periodic load of period 0", 'forcing.periodic(forcing.pulse(1, 0, 0.1), 0)'),
    ("a spectrum of a million periods", 'derivpad.response_spectrum(forcing.history([0, 1], '
     '[1, 1]), [0.1] * 1_000_000)'),
    ("a hundred parameter names",
     f'derive("y\'\' + " + " + ".join(f"a{{i}}" for i in range(100)) + "*y = 1", ics={REST})'),
]

_CHILD_HEAD = textwrap.dedent("""
    import json, resource, time
    resource.setrlimit(resource.RLIMIT_AS, (2 << 30, 2 << 30))
    import derivpad
    from derivpad import DerivpadError, derive, forcing
""")
_CHILD_RUN = textwrap.dedent("""
    for label, call in CASES:
        start = time.perf_counter()
        try:
            call()
            kind, text = "no error", ""
        except DerivpadError as exc:
            kind, text = "family", str(exc).splitlines()[0]
        except BaseException as exc:
            kind, text = type(exc).__name__, str(exc)[:200]
        print(json.dumps([label, kind, text, time.perf_counter() - start]), flush=True)
""")


def _child_script() -> str:
    """A script for the child process: each case a function of its own (the calls are this
    test's own source text, written into the script; nothing is evaluated from a string)."""
    cases = ",\n".join(f"    ({label!r}, lambda: {call})" for label, call in HOSTILE)
    return _CHILD_HEAD + "CASES = [\n" + cases + "\n]\n" + _CHILD_RUN


def test_every_hostile_input_is_refused_quickly_inside_the_family():
    proc = subprocess.run([sys.executable, "-c", _child_script()],
                          capture_output=True, text=True, timeout=240)
    rows = [json.loads(line) for line in proc.stdout.splitlines() if line.startswith("[")]
    assert len(rows) == len(HOSTILE), proc.stderr[-2000:]
    for label, kind, text, seconds in rows:
        assert kind == "family", f"{label}: {kind} {text}"
        assert text, label
        assert seconds < 5.0, f"{label} took {seconds:.1f} s"


CLI_BAD = [
    ["solve", "m*y'' + y = u(t)", "--ic", "y(0)=0", "--ic", "y'(0)=0", "--param", "m=abc"],
    ["solve", "y'' + y = 1e400*u(t)", "--ic", "y(0)=0", "--ic", "y'(0)=0"],
    ["solve", "m*y'' + c*y' + y = u(t)", "--ic", "y(0)=0", "--ic", "y'(0)=0", "--value", "m=1",
     "--value", "c=2"],
    ["solve", "y'' + y = 9^9^9", "--ic", "y(0)=0", "--ic", "y'(0)=0"],
    ["solve", "y'' + y = u(t)", "--ic", "y(0)=0"],
    ["solve", "y'' + y = u(t)", "--ic", "y(0)=0", "--ic", "y'(0)=0", "--unit", "y=furlongs**999"],
    ["audit", "no-such-package"],
    ["package", "no-such-notebook.ipynb"],
]


@pytest.mark.parametrize("argv", CLI_BAD, ids=lambda a: " ".join(a)[:50])
def test_the_command_line_never_prints_a_traceback(argv):
    proc = subprocess.run([sys.executable, "-m", "derivpad", *argv], capture_output=True,
                          text=True, timeout=120)
    assert "Traceback" not in proc.stderr + proc.stdout
    assert proc.returncode == 2, proc.stderr
    assert proc.stderr.startswith("derivpad: error:")


def test_some_values_missing_is_derived_but_not_verified():
    # --value for m only: the derivation stands in symbols, the independent checks cannot run
    proc = subprocess.run([sys.executable, "-m", "derivpad", "solve", "m*y'' + c*y' + y = u(t)",
                           "--ic", "y(0)=0", "--ic", "y'(0)=0", "--value", "m=1"],
                          capture_output=True, text=True, timeout=120)
    assert "Traceback" not in proc.stderr and proc.returncode == 3
    assert "NOT VERIFIED" in proc.stdout and "not run" in proc.stdout


def test_cli_error_gives_the_fix_in_option_syntax():
    proc = subprocess.run([sys.executable, "-m", "derivpad", "solve", "m*y'' + y = u(t)",
                           "--ic", "y(0)=0", "--ic", "y'(0)=0", "--param", "m=abc"],
                          capture_output=True, text=True, timeout=120)
    assert "--param m=2.5" in proc.stderr and "params=" not in proc.stderr


def test_a_closed_pipe_ends_quietly():
    # derivpad demo | head -1 (common practice for command-line tools: no BrokenPipeError)
    proc = subprocess.run(f'"{sys.executable}" -m derivpad demo | head -1', shell=True,
                          capture_output=True, text=True, timeout=120)
    assert "Traceback" not in proc.stderr and "BrokenPipe" not in proc.stderr


def test_exit_status_three_for_derived_but_not_verified(tmp_path):
    # no tolerance option on the command line; a failed check is forced through the module
    code = ("import sys; from derivpad import cli; from derivpad.core import engine\n"
            "real = engine.derive_problem\n"
            "engine.derive_problem = lambda p, **kw: real(p, **{**kw, 'tolerances': "
            "{'integration': 1e-30}})\n"
            "sys.exit(cli.main(['solve', \"y'' + 4*y = u(t)\", '--ic', 'y(0)=0', '--ic', "
            "\"y'(0)=0\"]))")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 3, proc.stderr
    assert "NOT VERIFIED" in proc.stdout
