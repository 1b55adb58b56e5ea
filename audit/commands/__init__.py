"""Sub-commands of the command line, one module each.

Each module defines ``NAME``, ``HELP``, ``add_arguments(parser)`` and ``run(args) -> int`` (an exit
code). :mod:`audit.commands.main` lists the modules in ``COMMANDS``; adding a command is one
module and one line there.
"""
