"""snrgain.tools: the builder's other jobs on the same stages: sweeps, layout, wire design, calibration, locating."""
