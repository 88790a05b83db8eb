"""Render: loop sheets as HTML and PDF, the issue package, the build cache (docs/design.md §8, §7).

- ``settings``: the ``[sheet]`` table of ``loopdocs.toml`` (paper, notes, revisions,
  release of sheets with errors);
- ``sheet``: one loop sheet as HTML from pieces made upstream (pure), jinja2 templates in
  ``loopdocs/templates/`` with autoescaping; ``caltables``: calibration tables as printed;
- ``pdf``: HTML to PDF with weasyprint through a URL fetcher that serves only ``data:``
  URIs and project files;
- ``pdfjoin``: a streaming PDF join (bookmarks, metadata, attachments);
- ``package``: cover sheet, drawing list, the joined package;
- ``cache``: content-hash keys and the build manifest; ``files``: output file helpers;
- ``pieces``: gathers diagram, charts, calibration tables and findings for one loop;
- ``build``: the parallel, cached, interruption-safe build behind ``loopdocs build``.

Nothing in this package is imported by ``loopdocs check``; weasyprint, jinja2 and pypdf
are imported only when a sheet is rendered.
"""
