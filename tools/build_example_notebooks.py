"""Write the example calculation notebooks and execute them, storing their outputs.

Run:  python tools/build_example_notebooks.py

The test suite re-executes each notebook with nbval and compares against the stored outputs,
so run this after any change that alters what the notebooks show.
"""

from __future__ import annotations

import os
from pathlib import Path

import nbformat as nbf
from nbclient import NotebookClient

HERE = Path(__file__).resolve().parents[1] / "example_notebooks"
CAUTION = ("**Caution.** A linear model with constant coefficients. Results are to be reviewed by a "
           "qualified engineer before use; local codes and licensed professional practice govern.")

md, code = nbf.v4.new_markdown_cell, nbf.v4.new_code_cell


def record(title, number, purpose, method, inputs, criteria=None):
    """The notebook's first code cell: its calc record."""
    limits = f",\n    criteria={criteria!r}" if criteria else ""
    return code("import derivpad\nrecord = derivpad.CalcRecord(\n"
                f"    title={title!r}, calc_number={number!r}, revision='0',\n"
                "    project='Demonstration calcs (scenario data of our own)',\n"
                f"    purpose={purpose!r},\n    method={method!r},\n"
                "    preparer='(preparer)', checker='(checker)',\n"
                f"    inputs={inputs!r}{limits})\nrecord")


METHOD = ("Laplace-transform solution by derivpad, each step with its rule; verified by "
          "back-substitution, numerical integration and numerical inversion.")
REC_SKID = record("Compressor skid isolators: surge-load response", "DEMO-001",
                  "Peak isolator deflection under the recorded surge, against 3 mm travel.",
                  METHOD, [("m", "900 kg", "skid datasheet"),
                           ("k", "3.6 MN/m", "isolator catalogue"),
                           ("c", "1.8 kN*s/m", "isolator catalogue"),
                           ("F", "load table", "piping surge record")])
REC_RELAY = record("Relay coil: drive-pulse current", "DEMO-002",
                   "Peak coil current and decay after switch-off.", METHOD,
                   [("L", "0.8 H", "coil datasheet"), ("R", "40 ohm", "coil datasheet"),
                    ("V0", "24 V", "driver specification"), ("toff", "60 ms", "drive timing")])
REC_ENCLOSURE = record("Instrument enclosure: warm-up time", "DEMO-003",
                       "Time for the enclosure to reach 40 K above ambient, and its final rise "
                       "against the instruments' 85 K limit.", METHOD,
                       [("Cth", "12 kJ/K", "thermal test"), ("Rth", "0.5 K/W", "thermal test"),
                        ("P", "150 W", "heater rating"), ("td", "10 min", "controller setting")],
                       criteria=["final_value <= 85 K"])

REC_ABSORBER = record("Pump frame with a tuned absorber: start-up vibration", "DEMO-004",
                      "Frame amplitude and absorber stroke at running speed, against 5 mm "
                      "absorber clearance.", METHOD,
                      [("m1", "400 kg", "pump and frame"), ("k1", "6.4 MN/m", "frame test"),
                       ("m2", "40 kg", "absorber design"), ("k2", "632 kN/m", "absorber design"),
                       ("c2", "200 N*s/m", "absorber design"),
                       ("F0", "1.5 kN", "unbalance at running speed"),
                       ("w", "125.66 rad/s", "1200 rpm running speed")])
REC_MOUNT = record("Instrument cabinet on rubber mounts: handling shocks", "DEMO-005",
                   "Peak cabinet travel under the handling specification's shock pulses, over "
                   "the mounts' stiffness tolerance, against 4 mm of sway space.", METHOD,
                   [("m", "120 kg", "cabinet weighing"),
                    ("k", "1.9 MN/m", "mount datasheet (four mounts; tolerance ±15 %)"),
                    ("c", "1.5 kN*s/m", "mount datasheet (about 5 % damping)")])

REC_FLOOR = record("Control cabinet on a plant floor: response to a support-motion record",
                   "DEMO-006", "Cabinet deflection on its mounts and absolute acceleration under "
                   "the floor's acceleration record, against 10 mm of clearance and the "
                   "instruments' 0.9 g rating; the record's response spectrum.", METHOD,
                   [("m", "350 kg", "cabinet weighing"), ("k", "550 kN/m", "mount datasheet"),
                    ("c", "1.4 kN*s/m", "mount datasheet (about 5 % damping)"),
                    ("ag", "floor acceleration record, 12 s at 200 Hz",
                     "plant survey (scenario data of our own)")],
                   criteria=["peak <= 10 mm", "peak_absolute_acceleration <= 8.8 m/s**2"])

NOTEBOOKS = {
    "cabinet_floor_record.ipynb": [
        md("# Control cabinet on a plant floor: response to a support-motion record\n\n"
           "**Question.** Under the floor's recorded acceleration, does the cabinet stay within "
           "10 mm of its mounts' clearance, and within its instruments' 0.9 g rating?\n\n"
           "**Inputs** (scenario data of our own): a 350 kg cabinet on mounts of 550 kN/m with "
           "1.4 kN·s/m of damping; the floor's acceleration a_g(t), 12 s logged at 200 Hz. The "
           "cabinet's motion relative to the floor is z; its absolute acceleration z'' + a_g.\n\n"
           "**Assumptions.** Rigid cabinet, one horizontal degree of freedom; mounts linear; "
           "at rest before the record.\n\n" + CAUTION),
        REC_FLOOR,
        code("import numpy as np\nfrom derivpad import forcing\n\n"
             "# the floor record (scenario data of our own): seeded, shaped noise\n"
             "rng = np.random.default_rng(2026)\n"
             "t = np.arange(0, 12, 0.005)\n"
             "ag = 2.4 * np.convolve(rng.normal(size=t.size), np.hanning(25) / 6, 'same') "
             "* np.exp(-((t - 4) / 2.5) ** 2)\n"
             "floor = forcing.history(t, ag, unit='m/s**2')\n"
             "d = derivpad.derive(\"m*z'' + c*z' + k*z = -m*ag\", {\"z(0)\": 0, \"z'(0)\": 0},\n"
             "                    {\"m\": \"350 kg\", \"c\": \"1.4 kN*s/m\", \"k\": \"550 kN/m\", "
             "\"ag\": floor},\n"
             "                    derived={\"absolute_acceleration\": \"z'' + ag\"},\n"
             "                    units={\"z\": \"mm\"}, criteria=record.criteria)\nd"),
        md("## The record's response spectrum (5 % damping)"),
        code("derivpad.response_spectrum(floor, np.geomspace(0.05, 4, 50), damping=0.05)"),
        code("for j in d.acceptance:\n"
             "    print(f\"{j.criterion.text}: {j.value:.3f}, utilisation {j.utilisation:.2f}, "
             "{j.outcome}\")\n"
             "assert d.verification.passed"),
    ],
    "skid_surge_history.ipynb": [
        md("# Compressor skid on isolators: response to a measured surge-load history\n\n"
           "**Question.** Does the skid's peak deflection under the surge stay within the "
           "isolators' allowable travel of 3 mm?\n\n"
           "**Inputs** (scenario data of our own): a 900 kg skid on four spring isolators of total "
           "stiffness 3.6 MN/m with 1.8 kN·s/m of damping. The surge force history below was read "
           "from a piping-load record (time, force).\n\n"
           "**Assumptions.** Rigid skid, one vertical degree of freedom; isolators linear; skid at "
           "rest before the surge.\n\n" + CAUTION),
        REC_SKID,
        code("import derivpad\nfrom derivpad import forcing\n\n"
             "surge = forcing.table([(0.0, 0), (0.005, 4000), (0.015, 4000), (0.02, 1500), "
             "(0.03, 0)])\n"
             "d = derivpad.derive(\"m*x'' + c*x' + k*x = F\", ics={\"x(0)\": 0, \"x'(0)\": 0},\n"
             "                    params={\"m\": \"900 kg\", \"c\": \"1.8 kN*s/m\", "
             "\"k\": \"3.6 MN/m\", \"F\": surge},\n"
             "                    units={\"x\": \"mm\", \"t\": \"s\"},\n"
             "                    criteria=[\"peak <= 3 mm\"])  # the isolators' travel\nd"),
        md("## Check against the allowable"),
        code("(travel,) = d.acceptance\n"
             "print(f\"{travel.criterion.text}: peak {travel.value:.3f} mm, utilisation "
             "{travel.utilisation:.2f}, {travel.outcome}; dynamic load factor "
             "{d.results['dynamic_load_factor'].magnitude:.3f}\")\n"
             "assert d.verification.passed"),
    ],
    "relay_coil_current.ipynb": [
        md("# Relay coil: current during a 60 ms drive pulse\n\n"
           "**Question.** What peak current does the coil draw during a 60 ms drive pulse, and how "
           "long after switch-off is the current below 2 % of that peak?\n\n"
           "**Inputs** (scenario data of our own): coil inductance 0.8 H, resistance 40 Ω, "
           "drive 24 V applied for 60 ms.\n\n"
           "**Assumptions.** Lumped RL model; the driver is an ideal voltage source; the "
           "inductance does not saturate; the coil is unenergised before the pulse.\n\n" + CAUTION),
        REC_RELAY,
        code("%load_ext derivpad"),
        code("%%derivation d\nL*i' + R*i = V0*(u(t) - u(t - toff))\ni(0) = 0\nL = 0.8 H\n"
             "R = 40 ohm\nV0 = 24 V\ntoff = 60 ms\nunits: i = mA, t = ms"),
        code("import numpy as np\ntau = d.results[\"time_constants\"].magnitude[0]\n"
             "peak = d.results[\"peak\"].magnitude\n"
             "print(f\"time constant {tau:.1f} ms, peak current {peak:.1f} mA at "
             "{d.results['time_of_peak'].magnitude:.1f} ms\")\n"
             "# after switch-off the current decays as exp(-(t - 60 ms)/tau): below 2 % after\n"
             "print(f\"below 2 % of the peak {tau * np.log(50):.1f} ms after switch-off\")"),
    ],
    "enclosure_heater_delay.ipynb": [
        md("# Heated instrument enclosure: time to reach the working temperature\n\n"
           "**Question.** The heater switches on 10 minutes after power-up. When does the enclosure "
           "reach 40 K above ambient, the instruments' working point?\n\n"
           "**Inputs** (scenario data of our own): thermal capacity 12 kJ/K, resistance to "
           "ambient 0.5 K/W, heater 150 W.\n\n"
           "**Assumptions.** One lumped thermal mass; T is the rise above a constant ambient; "
           "the heater power is constant once on.\n\n" + CAUTION),
        REC_ENCLOSURE,
        code("import derivpad\nd = derivpad.derive(\"Cth*T' + T/Rth = P*u(t - td)\", "
             "ics={\"T(0)\": 0},\n"
             "                    params={\"Cth\": \"12 kJ/K\", \"Rth\": \"0.5 K/W\", "
             "\"P\": \"150 W\", \"td\": \"10 min\"},\n"
             "                    units={\"T\": \"K\", \"t\": \"min\"})\nd"),
        code("from scipy.optimize import brentq\n"
             "target = 40.0  # K above ambient\n"
             "t_hit = brentq(lambda t: float(d([t])[0]) - target, 600.0, 60000.0)  # seconds\n"
             "print(f\"final rise {d.results['final_value'].magnitude:.1f} K; "
             "{target:.0f} K reached after {t_hit / 60:.1f} min\")"),
    ],
    "mount_shock_cases.ipynb": [
        md("# Instrument cabinet on rubber mounts: a table of handling shocks\n\n"
           "**Question.** Does the cabinet stay inside its 4 mm of sway space under every shock "
           "pulse of the handling specification, whatever the mounts' stiffness within their "
           "±15 % tolerance?\n\n"
           "**Inputs** (scenario data of our own): a 120 kg cabinet on four rubber mounts of "
           "total stiffness 1.9 MN/m (±15 %) with 1.5 kN·s/m of damping. The handling "
           "specification lists three force pulses, each taken as rectangular: a fork-lift drop "
           "(6 kN for 8 ms), a bump in transit (3.5 kN for 20 ms) and a dock impact (2 kN for "
           "60 ms).\n\n"
           "**Assumptions.** Rigid cabinet, one vertical degree of freedom; mounts linear; "
           "cabinet at rest before each pulse.\n\n" + CAUTION),
        REC_MOUNT,
        code("import pandas as pd\n"
             "import derivpad\n\n"
             "pulses = [(\"drop\", 6.0, 8), (\"bump\", 3.5, 20), (\"dock\", 2.0, 60)]  "
             "# F0 [kN], td [ms]\n"
             "stiffness = [(\"soft\", 1.9 * 0.85), (\"nominal\", 1.9), (\"stiff\", 1.9 * 1.15)]"
             "  # k [MN/m]\n"
             "cases = pd.DataFrame([(f\"{p}, {s}\", f0, td, k) for p, f0, td in pulses "
             "for s, k in stiffness],\n"
             "                     columns=[\"case\", \"F0 [kN]\", \"td [ms]\", \"k [MN/m]\"])\n"
             "r = derivpad.load_cases(\"m*x'' + c*x' + k*x = F0*(u(t) - u(t - td))\",\n"
             "                        ics={\"x(0)\": 0, \"x'(0)\": 0},\n"
             "                        params={\"m\": \"120 kg\", \"c\": \"1.5 kN*s/m\"},\n"
             "                        units={\"x\": \"mm\", \"t\": \"ms\"}, cases=cases,\n"
             "                        criteria=[\"peak <= 4 mm\"])  # the sway space\n"
             "r"),
        md("## The governing case"),
        code("worst = r.governing(\"peak <= 4 mm: utilisation\")\n"
             "print(f\"governing: {worst['case']}, peak {abs(worst['peak']):.3f} mm, \"\n"
             "      f\"dynamic load factor {worst['dynamic_load_factor']:.3f}, \"\n"
             "      f\"utilisation {worst['peak <= 4 mm: utilisation']:.2f}\")\n"
             "print(\"every case OK\" if r.all_ok else \"NOT OK in some case: see the table\")\n"
             "r.table[[\"case\", \"peak\", \"dynamic_load_factor\", \"peak <= 4 mm: outcome\"]]"),
    ],
    "pump_tuned_absorber.ipynb": [
        md("# Pump on a flexible frame with a tuned absorber: start-up vibration\n\n"
           "**Question.** The frame's natural frequency (about 20 Hz) lies near the pump's "
           "1200 rpm running speed. With a tuned absorber fitted, how large is the frame's "
           "vibration after start-up, and does the absorber's stroke stay inside its 5 mm "
           "clearance?\n\n"
           "**Inputs** (scenario data of our own): pump and frame 400 kg on a frame stiffness of "
           "6.4 MN/m; absorber 40 kg on 632 kN/m (tuned to 125.7 rad/s) with 200 N·s/m of "
           "damping; unbalance force 1.5 kN at running speed, from t = 0.\n\n"
           "**Assumptions.** Two lumped masses, vertical motion only; linear springs; the frame's "
           "own damping neglected (conservative at the frame mode); the pump reaches speed at "
           "once.\n\n" + CAUTION),
        REC_ABSORBER,
        code("import derivpad\n"
             "d = derivpad.derive(\n"
             "    [\"m1*x1'' + (k1 + k2)*x1 - k2*x2 - c2*(x2' - x1') = F0*sin(w*t)*u(t)\",\n"
             "     \"m2*x2'' + c2*(x2' - x1') + k2*(x2 - x1) = 0\"],\n"
             "    ics={\"x1(0)\": 0, \"x1'(0)\": 0, \"x2(0)\": 0, \"x2'(0)\": 0},\n"
             "    params={\"m1\": \"400 kg\", \"k1\": \"6.4 MN/m\", \"m2\": \"40 kg\", "
             "\"k2\": \"632 kN/m\",\n"
             "            \"c2\": \"200 N*s/m\", \"F0\": \"1.5 kN\", \"w\": \"125.66 rad/s\"},\n"
             "    units={\"x1\": \"mm\", \"x2\": \"mm\", \"t\": \"s\"},\n"
             "    derived={\"stroke\": \"x2 - x1\"},\n"
             "    criteria=[\"peak_stroke <= 5 mm\"])  # the absorber's clearance\nd"),
        md("## Check against the clearance"),
        code("for j in d.acceptance:\n"
             "    print(f\"{j.criterion.text}: {j.value:.3f} mm, utilisation {j.utilisation:.2f}, \"\n"
             "          f\"{j.outcome}\")\n"
             "print(f\"frame peak {d.results['peak_x1'].magnitude:.3f} mm\")\n"
             "print(\"frame modes [Hz]:\", \", \".join(f\"{f:.2f}\" for f in "
             "d.results[\"natural_frequencies_hz\"].magnitude))\n"
             "assert d.verification.passed"),
    ],
}


def main() -> None:
    # one BLAS thread in every kernel, as the test session runs them (see conftest.py)
    for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ[var] = "1"
    for name, cells in NOTEBOOKS.items():
        nb = nbf.v4.new_notebook()
        nb.cells = cells
        nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                     "language": "python"}
        NotebookClient(nb, timeout=600, kernel_name="python3",
                       resources={"metadata": {"path": str(HERE)}}).execute()
        for cell in nb.cells:
            if cell.cell_type == "code":
                cell.metadata.pop("execution", None)
        nbf.write(nb, HERE / name)
        print("wrote", name)


if __name__ == "__main__":
    main()
