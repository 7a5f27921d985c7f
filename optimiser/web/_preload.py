"""Imported by the fork server before it forks any job: load the pipeline and warm it up.

Never imported by the server process itself (it would spend the warm-up there for nothing).
"""

from __future__ import annotations

from stowflow.web._worker import warm_up

__all__: list[str] = []

warm_up()
