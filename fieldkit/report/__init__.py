"""The job card: one report model (:mod:`.model`) laid out as PDF, plain text or Markdown.

Importing this package is cheap: the PDF library is imported only when a PDF is rendered
(:func:`fieldkit.report.jobcard.render_card`), so the terminal UI and other commands start fast.
Use ``fieldkit.report.jobcard.write_job_card`` / ``write_report`` to write a job card, and
``fieldkit.report.build.job_card`` for the data behind it.
"""
