"""The one numba wrapper used by every kernel (in geometry, the most upstream package).

``cache=True`` keeps compiled code on disk so a second process does not recompile.
The fastmath set leaves out ``nnan``/``ninf`` so that a diverging solve still shows
up as NaN instead of being optimised away.
"""
import numba

FASTMATH = {"nsz", "arcp", "contract", "afn", "reassoc"}


def jit(func=None, **options):
    """``numba.njit`` with the project's caching and fastmath defaults."""
    settings = {"cache": True, "fastmath": FASTMATH, "nogil": True}
    settings.update(options)
    if func is None:
        return lambda f: numba.njit(**settings)(f)
    return numba.njit(**settings)(func)
