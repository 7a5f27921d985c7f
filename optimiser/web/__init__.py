"""The local web page of stowflow (``stowflow serve``): upload a cycle, get the report.

A thin shell over the library, like the command line: the form's fields come from the option
tables in :mod:`stowflow.io.options`, the text typed in goes to the same parsers, the design is
:func:`stowflow.pipeline.run` in a worker process, and the files handed back are what
:func:`stowflow.report.write_study` writes.

Modules: :mod:`~stowflow.web.app` (routes, pages, headers), :mod:`~stowflow.web.upload`
(streaming form reader with limits), :mod:`~stowflow.web.forms` (fields and form → study),
:mod:`~stowflow.web.jobs` (queue, worker processes, time limit), ``_worker`` (what runs in a
worker), ``templates/`` (Jinja2) and ``static/`` (CSS, a little JavaScript).
"""

from __future__ import annotations

from stowflow.web.app import ServerConfig, create_app, is_loopback

__all__ = ["ServerConfig", "create_app", "is_loopback"]
