"""Sub-commands of ``relaybench``; the table lives in ``emu.cli.COMMANDS``."""
