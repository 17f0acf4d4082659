"""Reports: the results of a model version as frames, tables and files.

- :mod:`~extractor.report.results` reads the store into the mention, respondent and
  concept frames and the run's :class:`~extractor.report.about.RunFacts`;
- :mod:`~extractor.report.inputs` checks, completes and filters those frames;
- :mod:`~extractor.report.tables` and :mod:`~extractor.report.summary` turn them into
  per-respondent tables and shares of respondents with their statistics
  (:mod:`~extractor.report.stats`);
- :mod:`~extractor.report.workbook` writes the Excel workbook through
  :mod:`~extractor.report.cells` (text stays text) and :mod:`~extractor.report.group_charts`,
  with the About sheet of :mod:`~extractor.report.about`;
- :mod:`~extractor.report.formats` writes CSV, JSON Lines, CoNLL IOB2 and W3C Web
  Annotations; :mod:`~extractor.report.privacy` pseudonymises before anything leaves;
- :data:`~extractor.report.caution.REVIEW_CAUTION` is the one review caution.

Apart from :mod:`~extractor.report.results`, nothing here reads the store: frames in,
tables and files out. The workspace-level export jobs are in :mod:`extractor.jobs.export`.
"""
