"""The file edge: safe YAML with the position of every value (:mod:`audit.input.document`,
:mod:`audit.input.flowlines`) and stream and claim tables from spreadsheets
(:mod:`audit.input.tables`). Nothing here knows the balance's model."""
