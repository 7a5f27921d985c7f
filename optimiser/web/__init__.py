"""The local web page of stowflow (``stowflow serve``): upload a cycle, get the report.

A thin shell over the library, like the command line: the form's fields come from the option
tables in :mod:`optimiser.options`, the text typed in goes to the same parsers, the design is
:func:`optimiser.pipeline.run` in a worker process, and the files handed back are what
:func:`optimiser.report.write_study` writes.

Modules: :mod:`~optimiser.web.app` (routes, pages, headers), :mod:`~optimiser.web.upload`
(streaming form reader with limits), :mod:`~optimiser.web.forms` (fields and form → study),
:mod:`~optimiser.web.jobs` (queue, worker processes, time limit), ``_worker`` (what runs in a
worker), ``templates/`` (Jinja2) and ``static/`` (CSS, a little JavaScript).
"""

from __future__ import annotations

from optimiser.web.app import ServerConfig, create_app, is_loopback

__all__ = ["ServerConfig", "create_app", "is_loopback"]
