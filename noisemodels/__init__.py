"""Published radio-noise models and directional noise skies.

- :mod:`noisemodels.p372`: ITU-R P.372 levels (man-made, galactic) and their
  combination (Section 8).
- :mod:`noisemodels.sphere`: the local sky on a HEALPix sphere.
- :mod:`noisemodels.sky`: components spread over directions, normalised to
  P.372's reference antenna.
- :mod:`noisemodels.solar`: the sun's elevation (day and night).

This package knows nothing of antennas or scenario files.
"""
