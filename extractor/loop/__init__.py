"""The labeling loop: query strategies, samples, the session (no screen) and simulation."""
