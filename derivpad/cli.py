"""The command line: ``derivpad demo``, ``solve``, ``cases``, ``package`` and ``audit``.

Exit status: 0 for a verified answer; 3 for a derivation that was derived but is NOT VERIFIED
(printed, marked so, with no engineering results); 1 for load cases of which a criterion is NOT
OK in some case (or a case failed), and for a package or audit that does not hold; 2 for an
error of the derivpad family (its message, never a traceback); 4 for an unexpected internal
error (one line, no traceback). A closed output pipe (``derivpad demo | head``) ends quietly.
"""

from __future__ import annotations

import argparse
import json
import re
import sys

from .errors import DerivpadError, InitialConditionError, ParameterError, in_syntax

__all__ = ["main"]

FORMATS = ("text", "latex", "json")
NOT_VERIFIED = 3
INTERNAL = 4

_FORMAT_HELP = ("text: readable terminal text, wrapped to --width; latex: a LaTeX document; "
                "json: the canonical JSON form, with the samples of --at (default: text)")
_WIDTH_HELP = ("wrap text output at this many columns (default: the terminal's width, 80 when "
               "the output is not a terminal)")


def _parser() -> argparse.ArgumentParser:
    from . import __version__
    parser = argparse.ArgumentParser(
        prog="derivpad",
        description="Step-by-step, self-checked Laplace-transform derivations of linear ODEs.",
        epilog="Exit status: 0 verified; 1 a load case NOT OK or failed, or a package or audit "
               "that does not hold; 2 input error; 3 derived but NOT VERIFIED; 4 internal error.")
    parser.add_argument("--version", action="version", version=f"derivpad {__version__}",
                        help="print the version and exit")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for add in (_demo_command, _solve_command, _cases_command, _package_commands,
                _signing_commands, _compare_command, _report_command):
        add(sub)
    return parser


def _demo_command(sub) -> None:
    """``derivpad demo``: the built-in scenario."""
    demo = sub.add_parser("demo", help="derive the built-in scenario and print it",
                          description="Derive the built-in scenario (a pump skid on spring "
                          "isolators under a pressure-surge pulse; data of our own) and print "
                          "every step, the checks, the results and sampled values.")
    demo.add_argument("--format", choices=FORMATS, default="text", help=_FORMAT_HELP)
    demo.add_argument("--width", type=int, metavar="COLUMNS", help=_WIDTH_HELP)


def _solve_command(sub) -> None:
    """``derivpad solve``: one ODE or a system given on the command line."""
    solve = sub.add_parser("solve", help="derive one ODE given on the command line")
    solve.add_argument("equation", nargs="+",
                       help="the ODE, e.g. \"y'' + 4*y' + 13*y = 2*u(t - 1)\"; several "
                            "equations make a coupled system (one per unknown)")
    solve.add_argument("--derived", action="append", default=[], metavar="NAME=EXPR",
                       help="a quantity of the unknowns to report, e.g. stroke=x1-x2 (repeat)")
    _problem_options(solve, "a parameter value, e.g. --param k=800 (repeat)")
    solve.add_argument("--value", action="append", default=[], metavar="NAME=VALUE",
                       help="a number for a symbolic parameter, used by the numerical checks "
                            "and results only (repeat)")
    solve.add_argument("--figure", metavar="PATH",
                       help="also write the verification figure (.svg, .png or .pdf)")
    solve.add_argument("--unknown", help="the unknown's name, when no name carries primes")
    solve.add_argument("--regime", choices=("underdamped", "overdamped"), default="underdamped",
                       help="case taken for a symbolic quadratic of unknown discriminant sign")
    solve.add_argument("--at", action="append", type=float, default=[], metavar="T",
                       help="also print the solution's value at time T (repeat)")
    solve.add_argument("--format", choices=FORMATS, default="text", help=_FORMAT_HELP)
    solve.add_argument("--width", type=int, metavar="COLUMNS", help=_WIDTH_HELP)
    _load_file_options(solve)


def _load_file_options(solve) -> None:
    """``solve --load-file``: a measured load record from a CSV or text file."""
    rec = solve.add_argument_group("measured load record (see docs/load-history.md)")
    rec.add_argument("--load-file", metavar="PATH",
                     help="a CSV/text file of (time, value) with a header naming the columns "
                          "and units, e.g. 't [ms], F [kN]'")
    rec.add_argument("--load-name", metavar="NAME",
                     help="the name in the equation the record stands for (default: the value "
                          "column's name in the header)")
    rec.add_argument("--time-column", metavar="COLUMN", help="the time column (default: first)")
    rec.add_argument("--load-column", metavar="COLUMN",
                     help="the value column (default: second)")
    rec.add_argument("--time-unit", metavar="UNIT",
                     help="unit of the times when the header gives none (default s)")
    rec.add_argument("--load-unit", metavar="UNIT",
                     help="unit of the values when the header gives none, e.g. kN")
    rec.add_argument("--hold-last", action="store_true",
                     help="keep the last value after the record (default: zero after it)")


def _load_record(args, params: dict) -> dict:
    """params= with the record of --load-file under its name (the column's, or --load-name)."""
    if not args.load_file:
        for flag in ("load_name", "time_column", "load_column", "time_unit", "load_unit"):
            if getattr(args, flag):
                raise ParameterError(f"--{flag.replace('_', '-')} applies to a record: give "
                                     "--load-file PATH too", flag)
        return params
    from .core.reading.history import read_history
    rec = read_history(args.load_file, time=args.time_column, value=args.load_column,
                       time_unit=args.time_unit, unit=args.load_unit, hold_last=args.hold_last)
    name = args.load_name or rec.name
    if not name or not name.isidentifier():
        raise ParameterError(f"the record's value column is named {rec.name!r}, which is not a "
                             "name in an equation; say which name it stands for with "
                             "--load-name NAME", "load_name")
    if name in params:
        raise ParameterError(f"{name!r} is given both by --param and by --load-file; give it "
                             "once", name)
    return {**params, name: rec}


def _cases_command(sub) -> None:
    """``derivpad cases``: one ODE for every case of a table."""
    cases = sub.add_parser("cases", help="evaluate one ODE for every case of a table",
                           description="Derive once per form and evaluate every case of a "
                           "table (CSV or Parquet; a column per varied parameter, its unit in "
                           "brackets: 'td [ms]'); print the envelope with its governing cases "
                           "and each criterion's outcome. Exit status 1 when a criterion is "
                           "NOT OK in any case or a case failed.")
    cases.add_argument("equation", help="the ODE, e.g. \"m*x'' + k*x = F0*(u(t) - u(t - td))\"")
    cases.add_argument("--table", required=True, metavar="PATH",
                       help="the case table, .csv or .parquet")
    _problem_options(cases, "a value the table does not vary, e.g. --param m=\"900 kg\" "
                            "(repeat)")
    cases.add_argument("--out", metavar="PATH",
                       help="write every case's results to this .csv or .parquet file")
    cases.add_argument("--record-failures", action="store_true",
                       help="keep a case that cannot be evaluated as a failed row (exit 1) "
                            "instead of stopping at it")
    cases.add_argument("--seed", type=int, default=0,
                       help="seed of the sample of cases integrated independently (default 0)")
    where = cases.add_mutually_exclusive_group()
    where.add_argument("--scheduler", metavar="WHERE",
                       help="run the chunks of cases on Dask: 'processes' for all local cores, "
                            "or a scheduler address such as tcp://host:8786 (the scale extra)")
    where.add_argument("--workers", type=int, metavar="N",
                       help="run the chunks of cases on N local worker processes (the scale "
                            "extra)")
    cases.add_argument("--width", type=int, metavar="COLUMNS", help=_WIDTH_HELP)


def _package_commands(sub) -> None:
    """``derivpad package`` and ``derivpad audit``: the calc package and its check."""
    package = sub.add_parser("package", help="execute a calc notebook and write its package")
    package.add_argument("notebook", help="the calculation notebook (.ipynb)")
    package.add_argument("-o", "--output", default=".", help="folder to write the package in")
    package.add_argument("--allow-failed", action="store_true",
                         help="package even if a derivation is not verified (marked NOT VERIFIED)")
    package.add_argument("--force", action="store_true",
                         help="replace an existing package of this revision (kept aside)")
    package.add_argument("--no-pdf", action="store_true", help="skip the PDF")
    package.add_argument("--page", choices=("A4", "Letter"), default="A4",
                         help="paper of the printed report (default: A4)")

    audit = sub.add_parser("audit", help="check a calc package against its SHA-256 manifest")
    audit.add_argument("package", help="the package folder or its .zip")
    audit.add_argument("--rerun", action="store_true",
                       help="re-execute the notebook and compare its results with the package's")
    audit.add_argument("--notebook", help="with --rerun: run this notebook instead of the "
                                          "packaged one (a working copy)")
    audit.add_argument("--trust", metavar="KEYS",
                       help="verify the signatures against these public keys (a folder of .pub "
                            "files, or one); see docs/signing.md")
    audit.add_argument("--require", default="", metavar="ROLES",
                       help="roles that must have a valid trusted signature, e.g. "
                            "preparer,checker")


def _report_command(sub) -> None:
    """``derivpad report PACKAGE``: the report again, its sign-off block filled."""
    report = sub.add_parser("report", help="render a signed package's report with its "
                                           "signatures, beside the package")
    report.add_argument("package", help="the package folder or its .zip")
    report.add_argument("--trust", metavar="KEYS",
                        help="verify the signatures against these public keys first")
    report.add_argument("-o", "--output", default=None,
                        help="folder to write the report in (default: beside the package)")
    report.add_argument("--no-pdf", action="store_true", help="skip the PDF")
    report.add_argument("--page", choices=("A4", "Letter"), default="A4",
                        help="paper of the printed report (default: A4)")


def _compare_command(sub) -> None:
    """``derivpad compare OLD NEW``: what changed between two revisions of a calc package."""
    compare = sub.add_parser("compare", help="list what changed between two package revisions")
    compare.add_argument("old", help="the earlier package (folder or .zip)")
    compare.add_argument("new", help="the later package (folder or .zip)")
    compare.add_argument("--format", choices=("table", "json"), default="table",
                         help="a table for the revision record (default), or JSON")


def _signing_commands(sub) -> None:
    """``derivpad keygen`` and ``derivpad sign``: keys and signed sign-off (docs/signing.md)."""
    keygen = sub.add_parser("keygen", help="make an Ed25519 key pair for signing calc packages")
    keygen.add_argument("--name", required=True, help="the key holder's name")
    keygen.add_argument("--role", action="append", required=True, choices=("preparer",
                        "checker", "approver"), help="a role the key may sign (repeat)")
    keygen.add_argument("--out", required=True, metavar="PATH",
                        help="the private key's path (the public key goes to PATH.pub)")
    keygen.add_argument("--passphrase-file", metavar="FILE",
                        help="protect the private key with the passphrase in FILE")
    sign = sub.add_parser("sign", help="add a signature to a calc package")
    sign.add_argument("package", help="the package folder or its .zip")
    sign.add_argument("--key", required=True, metavar="PATH", help="the private key")
    sign.add_argument("--role", required=True, choices=("preparer", "checker", "approver"),
                      help="the role this signature is given in (the key must allow it)")
    sign.add_argument("--comment", default="", help="a remark kept in the signed statement")
    sign.add_argument("--passphrase-file", metavar="FILE",
                      help="the passphrase of the private key, read from FILE")


def _passphrase(path) -> str | None:
    if not path:
        return None
    from pathlib import Path
    try:
        return Path(path).read_text(encoding="utf-8").rstrip("\n")
    except OSError as exc:
        raise ParameterError(f"the passphrase file {path} cannot be read ({exc})",
                             "passphrase_file") from exc


def _signing(args) -> str:
    from .export.signing import generate_keys, sign_package
    if args.command == "keygen":
        private, public = generate_keys(args.out, args.name, args.role,
                                        _passphrase(args.passphrase_file))
        return f"private key: {private} (keep it; mode 0600)\npublic key: {public} (share it)"
    path = sign_package(args.package, args.key, args.role, comment=args.comment,
                        passphrase=_passphrase(args.passphrase_file))
    return f"signed as {args.role}: {path}"


def _problem_options(command, param_help: str) -> None:
    """The options that state a problem, shared by ``solve`` and ``cases``: initial conditions,
    parameter values, display units and acceptance criteria."""
    command.add_argument("--ic", action="append", default=[], metavar="COND",
                         help="an initial condition at 0-, e.g. --ic \"y'(0)=0\" (repeat)")
    command.add_argument("--param", action="append", default=[], metavar="NAME=VALUE",
                         help=param_help)
    command.add_argument("--unit", action="append", default=[], metavar="NAME=UNIT",
                         help="display unit of the unknown or of t, e.g. --unit x=mm (repeat)")
    command.add_argument("--criterion", action="append", default=[], metavar="LIMIT",
                         help="an acceptance criterion on a result, e.g. --criterion "
                              "\"peak <= 3 mm\" (repeat); judged with units, OK / NOT OK")


def _audit(args) -> tuple[str, int]:
    from .export.audit import audit_package
    require = tuple(r.strip() for r in args.require.split(",") if r.strip())
    result = audit_package(args.package, rerun=args.rerun, notebook=args.notebook,
                           trust=args.trust, require=require)
    return f"Audit of {args.package}\n\n" + result.table(), 0 if result.holds else 1


def _cases(args) -> int:
    """``derivpad cases``: the envelope, each criterion's outcome, the verification."""
    from pathlib import Path
    from .cases import load_cases
    from .render.cases import cases_text
    out = Path(args.out) if args.out else None
    if args.workers is not None and args.workers < 1:
        raise ParameterError(f"--workers {args.workers}: give the number of worker processes, "
                             "1 or more, e.g. --workers 2", "workers")
    if out is not None and out.suffix.lower() not in (".csv", ".parquet"):
        raise ParameterError(f"cannot tell the format of --out {args.out!r}; end the name with "
                             ".csv or .parquet", "out")
    r = load_cases(args.equation, ics=_read_ics(args.ic),
                   params=_read_pairs(args.param, "--param", "m=\"900 kg\""),
                   units=_read_pairs(args.unit, "--unit", "x=mm"), cases=args.table,
                   criteria=args.criterion, seed=args.seed,
                   on_error="record" if args.record_failures else "raise", progress=None,
                   scheduler=args.scheduler, workers=args.workers)
    if out is not None:
        (r.to_parquet if out.suffix.lower() == ".parquet" else r.to_csv)(out)
    import textwrap
    width = _width(args.width)
    print("\n".join(textwrap.fill(line, width, subsequent_indent="      ")
                    for line in cases_text(r).splitlines()))
    if out is not None:
        print(f"every case's results written to {out}")
    failed = int((r.table["form"] == "failed").sum())
    return 0 if r.all_ok and not failed else 1


_IC = re.compile(r"^(.*\))\s*=\s*(.+)$")


def _read_ics(items: list[str]) -> dict:
    out = {}
    for item in items:
        m = _IC.match(item.strip())
        if not m:
            raise InitialConditionError(
                f"cannot read --ic {item!r}; write it as \"y(0)=0\" or \"y'(0)=1.5\"", key=item)
        out[m.group(1).strip()] = m.group(2).strip()
    return out


def _read_pairs(items: list[str], option: str, example: str) -> dict:
    out = {}
    for item in items:
        name, eq, value = item.partition("=")
        if not eq or not name.strip() or not value.strip():
            raise ParameterError(f"cannot read {option} {item!r}; write it as NAME=VALUE, e.g. "
                                 f"{example}", item)
        out[name.strip()] = value.strip()
    return out


def _width(asked: int | None) -> int:
    """The text width: as asked (at least 40), else the terminal's, else 80."""
    if asked is not None:
        if asked < 40:
            raise ParameterError(f"--width {asked} is too narrow to read; give 40 columns or "
                                 "more, e.g. --width 80", "width")
        return asked
    import shutil
    return max(40, min(shutil.get_terminal_size((80, 24)).columns, 160))


def _emit(derivation, fmt: str, times, title: str | None = None, width: int = 80) -> str:
    """The derivation in the chosen format; samples at ``times`` (s) of every unknown and
    derived quantity, in display units in the text table and in SI in JSON."""
    p = derivation.problem
    names = p.names
    if fmt == "json":
        data = derivation.to_dict()
        if times:
            values = derivation.values_at(list(times))
            data["samples"] = [{"t": t, **{n: float(values[n][i]) for n in names}}
                               for i, t in enumerate(times)]
            data["sample_units"] = {"t": "s", **{
                n: (p.unit_context(n).unknown_si if p.units else "")
                or "as the equation's numbers" for n in names}}
        return json.dumps(data, indent=2, ensure_ascii=False)
    if fmt == "latex":
        return derivation.to_latex(document=True)
    from .render.notation import text_expr
    from .render.text import wrap_terms
    out = []
    if title:
        import textwrap
        lines = textwrap.wrap(title, width)
        out += lines + ["=" * max(len(x) for x in lines), ""]
    out += [derivation.to_text(width=width), ""]
    for u, solution in derivation.solutions.items():
        si = p.unit_context(u).unknown_si if p.units else ""
        written = f" (SI: {u} in {si}, t in s)" if si else " (t in s)"
        if getattr(derivation, "record", None) is not None:  # under a load record
            written = (f" on one segment of the record, t standing for the time since the "
                       f"segment's start{written}")
        out.append(f"Solution{written}:")
        out.append(wrap_terms(f"{u}(t) = ", text_expr(solution,
                                                        decimals=dict(p.written_decimals)),
                              width, "    "))
    if times:
        out += [""] + _sample_table(derivation, times)
    return "\n".join(out)


def _sample_table(derivation, times) -> list[str]:
    """Rows of t and each quantity, in display units."""
    from .core.reading.units import display_factor, display_offset
    from .render.notation import format_value
    p = derivation.problem
    values = derivation.values_at(list(times))
    t_unit = p.units.time_display if p.units else ""
    t_scale = display_factor("s", t_unit) if p.units else 1.0
    columns, heads = [], []
    for name in p.names:
        ctx = p.unit_context(name)
        scale = display_factor(ctx.unknown_si, ctx.unknown_display) if ctx else 1.0
        offset = display_offset(ctx.unknown_si, ctx.unknown_display) if ctx else 0.0
        columns.append(values[name] * scale + offset)
        heads.append(f"{name}(t)" + (f" [{ctx.unknown_display}]" if ctx else ""))
    t_head = "t" + (f" [{t_unit}]" if t_unit else "")
    size = max(12, len(t_head))
    sizes = [max(12, len(h)) for h in heads]
    out = [f"{t_head:>{size}}  " + "  ".join(f"{h:>{n}}" for h, n in zip(heads, sizes))]
    out += [f"{format_value(t * t_scale, 6):>{size}}  "
            + "  ".join(f"{format_value(float(c[i]), 6):>{n}}" for c, n in zip(columns, sizes))
            for i, t in enumerate(times)]
    return out


def main(argv=None) -> int:
    """Entry point of the ``derivpad`` console script: never a traceback (see the module
    docstring for the exit statuses)."""
    try:
        return _main(argv)
    except BrokenPipeError:
        # the reader closed the pipe (derivpad demo | head): stop quietly
        import os
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0
    except KeyboardInterrupt:
        print("derivpad: interrupted", file=sys.stderr)
        return 130
    except SystemExit:
        raise
    except Exception as exc:  # noqa: BLE001 - the last line of defence: one line, no traceback
        print(f"derivpad: internal error ({type(exc).__name__}: {exc}); no answer is given. "
              "Please report the command that led to it.", file=sys.stderr)
        return INTERNAL


def _main(argv=None) -> int:
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command is None:  # a bare ``derivpad``: what it can do
        parser.print_help()
        return 0
    try:
        if args.command == "package":
            from .export.package import make_package
            result = make_package(args.notebook, args.output, allow_failed=args.allow_failed,
                                  force=args.force, pdf=not args.no_pdf,
                                  page_size=args.page)
            return 0 if result.verified else 1
        if args.command == "audit":
            text, code = _audit(args)
            print(text)
            return code
        if args.command in ("keygen", "sign"):
            print(_signing(args))
            return 0
        if args.command == "report":
            from .export.signed_report import signed_report
            path, note = signed_report(args.package, args.output, trust=args.trust,
                                       pdf=not args.no_pdf, page_size=args.page)
            print(f"report written: {path}" + (f" ({note})" if note else ""))
            return 0
        if args.command == "compare":
            from .export.compare import compare_packages, comparison_table
            rows = compare_packages(args.old, args.new)
            print(json.dumps([dict(zip(("part", "item", "change"), r)) for r in rows],
                             indent=2, ensure_ascii=False) if args.format == "json"
                  else comparison_table(rows))
            return 0
        if args.command == "cases":
            return _cases(args)
        if args.command == "demo":
            from .demo import DEMO_TIMES, DEMO_TITLE, demo
            d = demo()
            text = _emit(d, args.format, DEMO_TIMES, DEMO_TITLE, _width(args.width))
        else:
            from .core.engine import derive
            system = len(args.equation) > 1
            d = derive(args.equation if system else args.equation[0], ics=_read_ics(args.ic),
                       params=_load_record(args, _read_pairs(args.param, "--param",
                                                              "k=800")),
                       units=_read_pairs(args.unit, "--unit", "x=mm"),
                       values=_read_pairs(args.value, "--value", "m=2"),
                       unknown=args.unknown, regime=args.regime, on_failure="return",
                       derived=_read_pairs(args.derived, "--derived", "stroke=x1-x2"),
                       criteria=args.criterion)
            if args.figure:
                d.save_figure(args.figure)
            text = _emit(d, args.format, args.at, width=_width(args.width))
    except DerivpadError as exc:
        print(f"derivpad: error: {in_syntax(str(exc), 'cli')}", file=sys.stderr)
        return 2
    print(text)
    sys.stdout.flush()
    return 0 if d.verification.passed else NOT_VERIFIED


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
