"""The assembler's fixture programs are inputs of its tests, not programs to run as tests."""

collect_ignore = ["asm_fixtures"]
