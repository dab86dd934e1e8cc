"""The calculation report ``report.html``: jinja2 templates (``templates/``) rendered
over the result objects (:mod:`.render`), with the calculation of each section type at
its governing panel (:mod:`.calc`) and the figures (:mod:`.figures`)."""

from wallrun.outputs.report.render import render_report, write_report

__all__ = ["render_report", "write_report"]
