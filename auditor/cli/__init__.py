"""The command line.

Set here, before anything imports numpy: OpenBLAS starts one thread per core at import, which
costs a run start-up time (about 0.07 s of CPU) and buys nothing, since regaudit's least squares
are on matrices of two or three columns; in a pool of workers those threads would also compete
for the cores the workers run on. A value the user set is kept.
"""

import os

for _variable in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS"):
    os.environ.setdefault(_variable, "1")
