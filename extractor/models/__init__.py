"""The models of a version: CRF tagger, concept linking, stance, variety, metrics and persistence."""
