"""Reading and writing the tool's own files and option texts, in the trade's units.

* :mod:`~stowflow.io.quantities`: one parser per kind of option text (with units), one message
  style;
* :mod:`~stowflow.io.options`: the option tables and the settings built from them, shared by the
  CLI and the web form;
* :mod:`~stowflow.io.designfile`: ``design.json`` read back into a :class:`Design`;
* :mod:`~stowflow.io.jsonable`: plain JSON types from results.
"""
