"""Package data: the assembly-language grammar (assembly.lark)."""
