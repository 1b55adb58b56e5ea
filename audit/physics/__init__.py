"""Plain physics functions on SI floats: no streams, no findings, no I/O.

Each public function states its method, its equation, the unit of every parameter in brackets and
its published source in a References section.
"""
