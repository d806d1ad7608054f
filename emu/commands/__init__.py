"""Sub-commands of ``relaybench``; the table lives in ``emu.cli.COMMANDS``.

Each sub-command is a module of its own with ``add_arguments``
and ``main``; ``_options`` holds the option types they share and
``_progress`` the progress bar shown on a terminal.
"""

from ._progress import Progress, amount_text, rate_text_per_second, terminal_attached

__all__ = ["Progress", "amount_text", "rate_text_per_second", "terminal_attached"]
