"""The sheets of the findings workbook, one module each, in the workbook's order: overview,
findings, steps, streams, heat, exergy, method. Each has ``write(book)``, which fills its sheet of
a :class:`audit.report.sheets.context.Book` (the result, the sheets and the rows every sheet links
to); :mod:`audit.report.workbook` creates the book, calls them in order and writes the file."""
