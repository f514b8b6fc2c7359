"""A light start: what the command line and ``import snrgain`` load and change (issue 25)."""

import os
import subprocess
import sys

from tests.conftest import P372_DIR, REPO, SCENARIOS, needs_p372

SLOW_TO_IMPORT = ("scipy.integrate", "scipy.special", "scipy.interpolate", "healpy", "matplotlib", "pyproj")


def _loaded_after(*commands) -> list[list[str]]:
    """In a fresh interpreter, run each command line through click's runner; the slow libraries loaded after each."""
    code = "import sys\nfrom click.testing import CliRunner\nfrom snrgain.cli.main import cli\n"
    for args in commands:
        code += (
            f"r = CliRunner().invoke(cli, {list(args)!r})\n"
            "assert r.exit_code == 0, r.output\n"
            f"print(sorted(m for m in {SLOW_TO_IMPORT!r} if m in sys.modules))\n"
        )
    env = {**os.environ, "SNRGAIN_P372_DIR": str(P372_DIR), "SNRGAIN_NO_CACHE": "1"}
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=REPO, env=env
    ).stdout
    return [eval(line) for line in out.strip().splitlines()]


def test_help_and_check_load_no_slow_library():
    # Targets given by bearing or by place (the geodesic by Vincenty's inverse, snrgain.physics.geodesy): --help
    # and check need none of them.
    help_, by_bearing, by_place = _loaded_after(
        ["--help"],
        ["check", str(SCENARIOS / "wren-corner.toml")],
        ["check", str(SCENARIOS / "alder-hollow.toml")],
    )
    assert help_ == [] and by_bearing == []
    assert by_place == []


@needs_p372
def test_rank_of_a_realistic_site_loads_none_of_them():
    # The realistic benchmark site (long wires over and on the ground, a placed source, the TX vertical as a
    # scatterer, targets by place, P.372 storms, no sky cache) ranks with numpy's own Bessel, Faddeeva and
    # quadrature, and the storms' geodesics by Vincenty's direct solution (noisemodels.storms): none of the slow
    # libraries.
    (rank,) = _loaded_after(["rank", str(REPO / "benchmarks" / "realistic-site.toml")])
    assert rank == []


def test_import_snrgain_changes_no_process_setting():
    # The allocator's tuning (glibc mallopt) is process-wide: importing the library must not do it; the command
    # line does it once.
    code = (
        "import snrgain, snrgain.allocator as a\n"
        "snrgain.load  # a lazy name, loading the scenario machinery\n"
        "print(a._done)\n"
        "import snrgain.cli.main as m, sys\n"
        "print(a._done)\n"
        "sys.argv = ['snrgain', '--version']\n"
        "try:\n"
        "    m.main()\n"
        "except SystemExit:\n"
        "    pass\n"
        "print(a._done or sys.platform != 'linux')\n"
    )
    env_free = {k: v for k, v in __import__("os").environ.items() if k != "SNRGAIN_KEEP_MALLOC"}
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=REPO, env=env_free
    ).stdout.split()
    assert out[:2] == ["False", "False"]
    assert out[-1] == "True"


def test_healpy_loads_without_pyplot_for_the_sky():
    # The sky helpers need healpy's pixel functions only: matplotlib.pyplot stays unloaded.
    code = (
        "import sys\n"
        "from noisemodels import sphere\n"
        "hp = sphere.healpy()\n"
        "assert hp.nside2npix(4) == 192 and hp.get_interp_weights(4, 0.5, 0.5)[0].shape == (4,)\n"
        "print('matplotlib.pyplot' in sys.modules, 'matplotlib' in sys.modules)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=REPO).stdout
    assert out.split() == ["False", "False"]


def test_physical_constants_are_scipys_and_written_once():
    # One source: the values equal scipy.constants' (CODATA 2022) to the last digit, and no other module
    # writes out epsilon_0, mu_0, c or k.
    import re

    import scipy.constants as sc

    from noisemodels import constants
    from snrgain.physics import ground

    assert constants.C_M_PER_S == sc.c
    assert constants.EPS0_F_PER_M == sc.epsilon_0
    assert constants.MU0_H_PER_M == sc.mu_0
    assert constants.BOLTZMANN_J_PER_K == sc.k
    assert ground.EPS0_F_PER_M is constants.EPS0_F_PER_M and ground.ETA0_OHM == sc.mu_0 * sc.c
    literal = re.compile(r"8\.854187|1\.256637|299_?792_?458|2\.99792458e8|1\.380649e-23")
    writers = [
        str(p.relative_to(REPO))
        for folder in ("snrgain", "noisemodels")
        for p in sorted((REPO / folder).rglob("*.py"))
        if literal.search(p.read_text())
    ]
    assert writers == ["noisemodels/constants.py"]


def test_the_command_line_asks_blas_for_one_thread_unless_the_user_chose():
    # Process-wide, so only the command line's package does it, before numpy loads; a user's own setting wins and
    # ``import snrgain`` alone leaves the environment as it is.
    code = "import os, sys\n{first}\nimport numpy\nprint(os.environ.get('OPENBLAS_NUM_THREADS'))\n"
    base = {k: v for k, v in os.environ.items() if k not in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")}

    def run(first, **extra):
        return subprocess.run(
            [sys.executable, "-c", code.format(first=first)],
            capture_output=True,
            text=True,
            check=True,
            cwd=REPO,
            env={**base, **extra},
        ).stdout.strip()

    assert run("import snrgain.cli") == "1"
    assert run("import snrgain.cli", OPENBLAS_NUM_THREADS="2") == "2"
    assert run("import snrgain") == "None"


def test_the_command_line_raises_the_collectors_threshold_and_import_snrgain_does_not():
    # The command's process imports tens of thousands of objects: the collector runs far less often there; a
    # program importing the package alone keeps Python's default.
    code = "import gc\n{first}\nprint(gc.get_threshold()[0])\n"

    def run(first):
        return subprocess.run(
            [sys.executable, "-c", code.format(first=first)], capture_output=True, text=True, check=True, cwd=REPO
        ).stdout.strip()

    from snrgain.cli import GC_FIRST_THRESHOLD

    assert int(run("pass")) < GC_FIRST_THRESHOLD
    assert run("import snrgain.cli") == str(GC_FIRST_THRESHOLD)
    assert run("import snrgain") == run("pass")
    assert run("import gc; gc.set_threshold(200000); import snrgain.cli") == "200000"


def test_wire_modes_read_back_without_loading_the_modal_solver(tmp_path):
    # A wire's modal constants come from the persistent cache once solved: the solver's module (snrgain.physics.modal)
    # then stays unloaded, its source still keyed (the same digest as the imported module's file).
    code = (
        "import sys\n"
        "from snrgain.physics import lines\n"
        "from snrgain.physics.ground import Ground\n"
        "print(lines.overhead_wire(1.83e6, radius_m=0.001, height_m=2.5, ground=Ground(0.005, 13.0, 'x')).freq_hz)\n"
        "print('snrgain.physics.modal' in sys.modules)\n"
    )
    env = {k: v for k, v in os.environ.items() if k != "SNRGAIN_NO_CACHE"}
    env["SNRGAIN_CACHE_DIR"] = str(tmp_path)

    def run():
        return subprocess.run(
            [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=REPO, env=env
        ).stdout.split()

    assert run()[-1] == "True"  # solved, and kept
    assert run()[-1] == "False"  # read back
    assert len(list(tmp_path.rglob("wiremode-*.npy"))) == 1


@needs_p372
def test_a_warm_rank_does_not_load_numpy_ma(tmp_path):
    # np.unique and np.median of plain arrays import numpy.ma (about 15 ms) to look for masks; a warm rank's path
    # (the sky cache filled by a first run) uses their mask-free forms (snrgain.model.spread.median)
    code = (
        "import sys\nfrom click.testing import CliRunner\nfrom snrgain.cli.main import cli\n"
        f"r = CliRunner().invoke(cli, ['rank', {str(REPO / 'benchmarks' / 'realistic-site.toml')!r}])\n"
        "assert r.exit_code == 0, r.output\nprint('numpy.ma' in sys.modules)\n"
    )
    env = {**os.environ, "SNRGAIN_P372_DIR": str(P372_DIR), "SNRGAIN_CACHE_DIR": str(tmp_path)}
    env.pop("SNRGAIN_NO_CACHE", None)
    runs = [
        subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=REPO, env=env)
        for _ in range(2)
    ]
    assert runs[1].stdout.split()[-1] == "False"
