"""Flow devices: what passes through a link, given the states at its two ends."""
