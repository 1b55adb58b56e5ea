"""Reports: console summary, JSON, CSV and the findings workbook. They read
:mod:`audit.results` objects and never compute physics."""
