"""Text a person reads: terminal reports, exports (Markdown, CSV, HTML) and plots. Views format results;
they compute no chemistry.

One module per kind of result: ``report`` (an evaluation), ``projection``, ``solve``, ``series``, ``fit``,
``catalog`` (search, entry, check), ``check`` (plan checks), ``diff`` (two plans), ``locate``, ``export``
(preparation sheets and reports as Markdown, CSV, HTML), ``plot``; ``jsontext`` for JSON. Every column
layout goes through ``table`` (plain text and Markdown); text from files goes through ``safe_text``
(control characters escaped for terminals, formulas made inert in CSV, HTML escaped in Markdown and HTML). The commands print what these return through
``mediaplan.files.output.write_output``.
"""
