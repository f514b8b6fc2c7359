"""The given-phasing-short notice (snrgain.decide.given_phasing): an array with given phasing that leaves 3 dB or
more of RDF toward its bearing on the table is told so, with the phases that do better."""

import pytest

import snrgain
from snrgain.outputs.messages import notice_text
from tests.conftest import MINIMAL


def _pair(name: str, phasing: str) -> str:
    return (
        f'[[candidate]]\nname = "{name}"\nfamily = "phased-verticals"\n'
        'positions = [["250 ft", "150 ft"], ["250 ft", "190 ft"]]\nheight = "20 ft"\nbearing = 0\n'
        f"{phasing}\n\n"
    )


def _said(phasing: str) -> list:
    r = snrgain.evaluate(MINIMAL.replace("[[candidate]]", _pair("pair", phasing) + "[[candidate]]", 1))
    return [n for n in r.notices if n.code == "given-phasing-short" and n.antenna == "pair"]


def test_a_first_guess_phasing_of_a_close_pair_is_told():
    """A 40 ft pair at 1.83 MHz (0.07 wavelength) delayed by its spacing's travel time (37 ns): near omnidirectional;
    phased for RDF it gives 5 dB more, with the second element lagging about 170 deg (a newcomer's pair ranked
    +0.3 dB without a word)."""
    said = _said('steering = "given"\ndelays = ["0 ns", "37 ns"]')
    assert len(said) == 1
    v = said[0].values
    assert v["rdf_best_db"] - v["rdf_db"] >= 3.0
    assert v["best_lags_deg"][0] == 0.0 and 150.0 < v["best_lags_deg"][1] < 180.0
    assert "check the phasing" in notice_text(said[0])


@pytest.mark.parametrize(
    "phasing",
    [
        'steering = "given"\nphases = [0, 170]\nphase_sense = "lag"',  # as the notice proposes
        'steering = "auto"',  # set for RDF already
        'steering = "given"\nphases = [170, 0]\nphase_sense = "lag"',  # beamed the other way: the lobe-away warning's
    ],
)
def test_a_good_phasing_an_auto_one_or_a_reversed_one_is_not(phasing):
    assert not _said(phasing)
