"""The command line: demo, solve, formats, and errors without tracebacks."""

import json
import subprocess
import sys

from derivpad.cli import main


def test_demo_prints_the_derivation_and_samples(capsys):
    assert main(["demo"]) == 0
    out = capsys.readouterr().out
    assert "Pump skid" in out and "Partial fractions" in out and "all checks passed" in out
    assert "qualified engineer" in " ".join(out.split())   # the caution, however wrapped
    assert "x(t) [mm]" in out.splitlines()[-11]
    # every line fits the width (80 columns when the output is not a terminal)
    assert max(len(line) for line in out.splitlines()) <= 80
    assert main(["demo", "--width", "60"]) == 0
    assert max(len(line) for line in capsys.readouterr().out.splitlines()) <= 60


def test_bare_command_prints_help_and_version_is_given(capsys):
    assert main([]) == 0
    out = capsys.readouterr().out
    assert out.startswith("usage: derivpad") and "demo" in out and "Exit status" in out
    try:
        main(["--version"])
    except SystemExit as exc:
        assert exc.code == 0
    from derivpad import __version__
    assert capsys.readouterr().out.strip() == f"derivpad {__version__}"
    assert main(["demo", "--width", "20"]) == 2
    assert "too narrow" in capsys.readouterr().err


def test_every_option_has_help_text():
    import argparse

    from derivpad.cli import _parser
    parser = _parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    for name, command in sub.choices.items():
        for action in command._actions:
            assert action.help, f"{name} {action.option_strings or action.dest}"


def test_solve_text_and_values(capsys):
    assert main(["solve", "y'' + 9*y = delta(t)", "--ic", "y(0)=0", "--ic", "y'(0)=0",
                 "--at", "0.5"]) == 0
    out = capsys.readouterr().out
    assert "Solution (t in s):\ny(t) = sin(3*t)/3" in out
    # sin(1.5)/3 = 0.332498 (direct evaluation), to six significant figures
    assert "0.332498" in out


def test_solve_json_is_machine_readable(capsys):
    assert main(["solve", "y' + 2*y = 4", "--ic", "y(0)=1", "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["format"] == "derivpad.derivation"
    assert data["solution"]["text"] == "2 - exp(-2*t)"
    assert data["verification"]["passed"] is True


def test_solve_latex(capsys):
    assert main(["solve", "y'' + k*y = u(t - 1)", "--ic", "y(0)=0", "--ic", "y'(0)=0",
                 "--param", "k=4", "--format", "latex"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("\\documentclass") and "u(t - 1)" in out


def test_errors_print_a_message_and_exit_nonzero(capsys):
    assert main(["solve", "y'' + y*y' = 0", "--ic", "y(0)=0", "--ic", "y'(0)=0"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("derivpad: error:") and "Traceback" not in err
    assert main(["solve", "y'' + y = 0", "--ic", "y(0)"]) == 2
    assert main(["solve", "y'' + k*y = 0", "--ic", "y(0)=0", "--ic", "y'(0)=0",
                 "--param", "k"]) == 2


def test_console_entry_point_runs_as_module():
    proc = subprocess.run([sys.executable, "-m", "derivpad", "solve", "y' = __import__('os')",
                           "--ic", "y(0)=0"], capture_output=True, text=True)
    assert proc.returncode == 2
    assert "underscore" in proc.stderr and "Traceback" not in proc.stderr


def test_audit_reports_a_table_and_exit_code(tmp_path, capsys):
    from derivpad.export.manifest import write_manifest
    root = tmp_path / "C-7-rev0"
    root.mkdir()
    (root / "results.json").write_text("[]")
    write_manifest(root)
    assert main(["audit", str(root)]) == 1          # intact, but nothing in it is verified
    out = capsys.readouterr().out
    assert "intact: every file present and matching" in out and "| verified" in out
    (root / "results.json").write_text("[ ]")
    assert main(["audit", str(root)]) == 1
    out = capsys.readouterr().out
    assert "results.json | ALTERED (checksum differs)" in out and "DOES NOT HOLD" in out
    assert main(["audit", str(tmp_path / "missing")]) == 2


def test_solve_a_coupled_system_as_json(capsys):
    import numpy as np
    from tests.reference import integrate_second_order
    assert main(["solve", "m1*x1'' + (k1 + k2)*x1 - k2*x2 = F0*u(t)",
                 "m2*x2'' + k2*(x2 - x1) = 0", "--ic", "x1(0)=0", "--ic", "x1'(0)=0",
                 "--ic", "x2(0)=0", "--ic", "x2'(0)=0", "--param", "m1=2", "--param", "m2=1",
                 "--param", "k1=800", "--param", "k2=200", "--param", "F0=50",
                 "--derived", "stroke=x1-x2", "--at", "0.1", "--at", "0.5",
                 "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["version"] == 2 and data["problem"]["unknowns"] == ["x1", "x2"]
    ref = integrate_second_order([[2, 0], [0, 1]], np.zeros((2, 2)),
                                 [[1000, -200], [-200, 200]], lambda t: [50.0, 0.0],
                                 [0, 0], [0, 0], [0.1, 0.5])
    for row, (x1, x2) in zip(data["samples"], ref):
        assert abs(row["x1"] - x1) < 1e-9 and abs(row["x2"] - x2) < 1e-9
        assert abs(row["stroke"] - (x1 - x2)) < 1e-9


def test_cases_prints_the_envelope_and_exits_1_when_a_case_is_not_ok(capsys, tmp_path):
    # undamped pulse, T = 1 s: DLF 2 sin(π t_d/T) = 1.17557 at t_d = 0.2 s, 2 at 0.5 s
    # (Harris' Shock and Vibration Handbook ch. 8, from memory)
    (tmp_path / "cases.csv").write_text("case,td [ms]\nshort,200\nhalf,500\n")
    args = ["cases", "m*x'' + k*x = F0*(u(t) - u(t - td))", "--ic", "x(0)=0", "--ic",
            "x'(0)=0", "--param", "m=1 kg", "--param", "k=39.47841760435743 N/m", "--param",
            "F0=1 N", "--table", str(tmp_path / "cases.csv"), "--out",
            str(tmp_path / "out.parquet")]
    assert main(args + ["--criterion", "dynamic_load_factor <= 1.9", "--width", "80"]) == 1
    out = capsys.readouterr().out
    assert "NOT OK in 1 of 2 cases" in out
    assert "dynamic_load_factor: max 2 (case half), min 1.17557 (case short)" in out
    assert all(len(line) <= 80 for line in out.splitlines() if str(tmp_path) not in line)
    assert (tmp_path / "out.parquet").is_file()
    assert main(args + ["--criterion", "dynamic_load_factor <= 2.1"]) == 0
    capsys.readouterr()
    assert main(args + ["--criterion", "dynamic_load_factor <= 2.1", "--workers", "2"]) == 0
    assert "dynamic_load_factor: max 2 (case half)" in capsys.readouterr().out
    assert main(args + ["--workers", "0"]) == 2
    assert "--workers 0: give the number of worker processes" in capsys.readouterr().err
    assert main(args[:-2] + ["--out", str(tmp_path / "out.txt")]) == 2
    assert "end the name with .csv or .parquet" in capsys.readouterr().err
    (tmp_path / "bad.csv").write_text("case,td [ms]\nshort,x\n")
    assert main(args[:-4] + ["--table", str(tmp_path / "bad.csv")]) == 2
    assert "case short: 'x' is not a finite number" in capsys.readouterr().err


def test_solve_with_a_load_file(tmp_path, capsys):
    # a half-sine pressure pulse logged in ms and kN; the record's column name is the load's
    path = tmp_path / "record.csv"
    path.write_text("t [ms],P [kN]\n0,0\n10,7.0710678\n20,10\n30,7.0710678\n40,0\n")
    code = main(["solve", "m*x'' + k*x = P", "--ic", "x(0)=0", "--ic", "x'(0)=0",
                 "--param", "m=850 kg", "--param", "k=1.6 MN/m", "--unit", "x=mm",
                 "--load-file", str(path)])
    out = capsys.readouterr().out
    assert code == 0 and "From knot to knot" in out and "peak response" in out
    assert "on one segment of the record" in out


def test_load_file_errors_name_the_line(tmp_path, capsys):
    path = tmp_path / "bad.csv"
    path.write_text("t [s],F [N]\n0,0\n1,x\n")
    code = main(["solve", "x'' + x = F", "--ic", "x(0)=0", "--ic", "x'(0)=0",
                 "--load-file", str(path)])
    err = capsys.readouterr().err
    assert code == 2 and "line 3" in err and "Traceback" not in err
    code = main(["solve", "x'' + x = F", "--ic", "x(0)=0", "--ic", "x'(0)=0",
                 "--load-unit", "kN"])
    assert code == 2 and "--load-file" in capsys.readouterr().err
