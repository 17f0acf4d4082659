"""Workspace-level jobs, one module per command.

Each job takes an open workspace, does its work through the store and the models, and
returns a small frozen record for the command line to print: ``train``, ``tag``,
``label``, ``run``, ``export``, ``evaluate``, ``simulate``, ``curate``, ``status``; what
several of them read from a workspace is in ``inputs``.
"""
