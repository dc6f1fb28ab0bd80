"""Numba options in one place, so every kernel compiles the same way and is cached on disk."""

JIT_OPTIONS = {"cache": True, "nogil": True}
PARALLEL_OPTIONS = {**JIT_OPTIONS, "parallel": True}
