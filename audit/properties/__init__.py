"""The property layer: the only code that imports CoolProp.

:mod:`audit.properties.engine` evaluates stream states on the formation basis (data in
:mod:`audit.formation`) with the dead state and caches them; it draws on
:mod:`audit.properties.fluids` (pure fluids: constants, limits, the formation-basis shift, range
checks), :mod:`audit.properties.mixtures` (ideal-gas mixtures from the pure species' ideal-gas
parts), :mod:`audit.properties.inversion` (temperature from h or s) and returns
:class:`audit.properties.state.State` records.
"""
