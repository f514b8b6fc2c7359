"""NEC-2's own segmentation spread for the terminated-loop references (writes termloop_convergence.json).

The loops of make_termloops.py (same outlines, grounds, 0.1 m gaps and one-segment bridges) at the same four
resistors, with the wires cut into segments of 0.3 m (the stored references), 0.15 m and 0.1 m.  NEC-2's forward
gain falls as the segments shorten (by 0.2-0.25 dB from 0.3 m to 0.1 m on the 3.6 MHz delta and the 7.1 MHz
diamond, the steps shrinking: 0.16 then 0.07 dB), toward the model's, which the coarse references read as 0.46-0.60
dB low.  The finest run is NEC's figure for the target; the spread between the runs is stated with it
(tests/test_termloop_nec.py).

Run: python tests/nec/make_termloop_convergence.py  (a few minutes; needs nec2c on the PATH)
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

import tests.nec.make_termloops as loops  # noqa: E402

STEPS_M = [0.3, 0.15, 0.1]


def main():
    ref = {
        "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
        "elevation_deg": 20.0,
        "gap_m": loops.GAP_M,
        "steps_m": STEPS_M,
        "cases": [],
    }
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for case in loops.CASES:
            runs = []
            for r in loops.RESISTORS_OHM:
                by_step = []
                for step in STEPS_M:
                    loops.STEP_M = step
                    _, m, z = loops._run(case, r, work)
                    by_step.append(
                        {
                            "step_m": step,
                            **{k: round(float(v), 3) for k, v in m.items()},
                            "feed_impedance_ohm": [round(z.real, 2), round(z.imag, 2)],
                        }
                    )
                runs.append({"termination_ohm": r, "by_step": by_step})
            ref["cases"].append({"name": case[0], "runs": runs})
            print(case[0], [[s["forward_gain_dbi"] for s in run["by_step"]] for run in runs], flush=True)
    (HERE / "termloop_convergence.json").write_text(json.dumps(ref, indent=1) + "\n")


if __name__ == "__main__":
    main()
