"""The ``traits`` command line and the labeling screen: the only place that prints.

:mod:`~extractor.cli.main` builds the parser and handles errors; each command group has a
module (``workspace_cmds``, ``concept_cmds``, ``model_cmds``, ``label_cmds``) whose
commands parse, call one job from :mod:`extractor.jobs` and print what it returns.
"""
