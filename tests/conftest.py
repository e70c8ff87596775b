"""Suite-wide test settings.

One BLAS/OpenMP thread for the whole test session: the machines this runs on have two cores, and the
linear algebra of the estimator is many small solves, for which competing OpenBLAS threads were about ten
times slower than one thread (measured on this project's CI machine kind). Product code is unaffected.
"""

import pytest
from threadpoolctl import threadpool_limits


@pytest.fixture(autouse=True, scope="session")
def _one_blas_thread():
    with threadpool_limits(limits=1):
        yield
