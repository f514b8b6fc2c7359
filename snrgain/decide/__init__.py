"""snrgain.decide: decisions from the results: the station plan, build sheets, the lot's rules."""
