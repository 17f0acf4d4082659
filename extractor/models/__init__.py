"""The models of a version: CRF tagger, linking, stance, variety, metrics, persistence."""
