"""A given phasing that throws away what the array could do: the ``given-phasing-short`` notice.

An array whose delays or phases are given (``steering = "given"``) is built as written; a close-spaced pair phased
by a first guess (its spacing's travel time, as for a wide end-fire pair) can come out near omnidirectional.  The
same array's phases set for the best RDF toward its bearing at its aiming elevation (the steering's own search,
its amplitudes kept: snrgain.antennas.array.Array.steer) are worked, and where they give RDF_SHORT_DB or more RDF
than the phasing given, the notice gives both, with the phases that do it, so the builder can check the phasing
before cutting lines.  The figures are read toward the bearing, beside the site's scatterers as the array stands
(snrgain.decide.tolerance.figures).  An array the lobe-away warning names (snrgain.decide.decisions.lobe_away) is
left to it (a sign to check, not a phasing to tune).
"""

from __future__ import annotations

import numpy as np

from snrgain.model.results import Notice

RDF_SHORT_DB = 3.0
"""snrgain's threshold: the RDF the given phasing leaves on the table before it is said (half an S-unit)."""


def given_phasing_notices(sc) -> list[Notice]:
    """``given-phasing-short`` for each candidate array with given phasing whose RDF toward its bearing lies
    RDF_SHORT_DB or more under the same array's phased for RDF; values rdf_db, rdf_best_db, front_to_back_db,
    front_to_back_best_db, bearing_deg, best_lags_deg (each element's phase lag, the first at 0)."""
    from snrgain.antennas.array import shortest_lags
    from snrgain.decide.decisions import lobe_away
    from snrgain.decide.tolerance import FRONT_TO_BACK_CAP_DB, figures
    from snrgain.model.scatter import bare

    f = sc.freq_hz
    out = []
    for ant in sc.candidates:
        own = bare(ant)
        if own.composite or getattr(own.params, "steering", None) != "given" or len(getattr(own, "elements", ())) < 2:
            continue
        if lobe_away(ant, f) is not None:
            continue  # beamed the other way: the lobe-away warning says to check the sign
        front = (float(own.params.bearing), float(own.params.auto_elevation))
        trial = own.copy()
        trial.steer(f)  # its phases for the best RDF there (the array's auto_for "rdf"), its amplitudes kept
        best = trial.weights_at(f)
        rdf, fb = figures(ant, f, front=front)
        rdf_best, fb_best = figures(ant, f, weights=best, front=front)
        if rdf_best - rdf < RDF_SHORT_DB:
            continue
        values = {
            "bearing_deg": float(np.degrees(front[0])) % 360.0,
            "rdf_db": float(rdf),
            "rdf_best_db": float(rdf_best),
            "front_to_back_db": float(min(fb, FRONT_TO_BACK_CAP_DB)),
            "front_to_back_best_db": float(min(fb_best, FRONT_TO_BACK_CAP_DB)),
            "best_lags_deg": [float(x) for x in np.round(np.degrees(shortest_lags(best)), 1)],
        }
        out.append(Notice("given-phasing-short", ant.name, values))
    return out


__all__ = ["RDF_SHORT_DB", "given_phasing_notices"]
