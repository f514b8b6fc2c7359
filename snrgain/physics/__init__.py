"""snrgain.physics: the physics of antennas over ground and of the receiving chain, in SI units."""
