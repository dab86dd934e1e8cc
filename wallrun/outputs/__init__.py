"""Writers of the output folder: tables, JSON, drawings, previews and the report."""
