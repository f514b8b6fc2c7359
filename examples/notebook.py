"""snrgain in a notebook: load a site, evaluate it, select by label, plot one antenna's pattern.

    python examples/notebook.py OUT.png

A plain script laid out as notebook cells (``# %%``, which Jupyter, VS Code and Spyder open as cells).  The core
is the five lines of the second cell; the rest prints and labels.  Units: SNR gain in dB, gain in dBi, frequency
in Hz, angles in degrees.
"""

# %% Setup: a backend that draws to files, so the script runs without a display.
import sys
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402 - after choosing the backend
import numpy as np  # noqa: E402

import snrgain  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "scenarios" / "marrow-fen.toml"
out = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("pattern.png")

# %% Load, evaluate, select by label, plot one antenna object's pattern.
scenario = snrgain.load(DEMO)
ds = snrgain.evaluate(scenario).to_xarray()
gain = ds.snr_gain_db.sel(antenna="two-wire pair, north-west port", target="East Asia").median("month")
wire = next(a for a in scenario.candidates if a.name == "two-wire pair, north-west port")
plt.plot(az := np.arange(0.0, 360.5, 1.0), wire.gain_dbi(scenario.band.freq_hz, az, 8.0))

# %% What came out.
units = ds.snr_gain_db.attrs["units"]
print(f"SNR gain of the north-west two-wire pair toward East Asia, median over the months [{units}]:")
print(gain.to_pandas().round(2).to_string())
spread = ds.snr_gain_quantile_db.sel(antenna="two-wire pair, north-west port", target="East Asia")
print("10 %, median, 90 % over the spreads counted:", ", ".join(f"{v:+.1f} dB" for v in spread.values))
plt.xlabel("azimuth (compass bearing, deg)")
plt.ylabel("total gain at 8 deg elevation (dBi)")
plt.title(f"{wire.name}, {scenario.band.freq_hz / 1e6:g} MHz")
plt.grid(alpha=0.3)
plt.savefig(out, dpi=100)
print(f"wrote {out}")
