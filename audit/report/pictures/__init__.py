"""Pictures of a result as SVG text: the plant's network, T–Q diagrams of the heat exchangers, the
exergy flow (Grassmann) diagram and the exergy destroyed per step; and the network as PNG, for the
workbook. They read results only (the exergy account comes from :mod:`audit.accounts`) and draw
with plain colours: red for a step with an error, amber for one with a warning."""
