"""Test-suite hygiene: floating-point errors raise, random generators are seeded."""
import numpy as np
import pytest

np.seterr(all="raise", under="ignore")


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)
