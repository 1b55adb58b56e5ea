"""The property layer: the only code that imports CoolProp.

:mod:`audit.properties.engine` evaluates pure-fluid stream states on the formation basis (data in
:mod:`audit.formation`) with the dead state; :mod:`audit.properties.mixtures` evaluates ideal-gas
mixtures from the pure species' ideal-gas parts.
"""
