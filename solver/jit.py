"""The project's jit wrapper lives upstream in :mod:`geometry.jit`; re-exported here for kernels."""
from geometry.jit import FASTMATH, jit  # noqa: F401
