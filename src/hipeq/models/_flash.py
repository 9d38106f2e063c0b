"""Compiled pieces of the vapour-liquid flash (hipeq.models.phases): the Rachford-Rice equation.

Private layer: arrays and scalars in, ``out`` arrays; nothing here raises.

For K-factors K_i and a feed z, the vapour fraction beta solves

    sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0,

(Rachford & Rice 1952, J. Petrol. Technol. 4(10), 19-3; Michelsen & Mollerup 2007, "Thermodynamic Models", 2nd
ed., ch. 10), whose left side falls monotonically in beta between the poles; Newton's method safeguarded by a
bisection bracket on [0, 1] finds it. The phase compositions follow as x_i = z_i / (1 + beta (K_i - 1)),
y_i = K_i x_i.
"""
from __future__ import annotations

import math

from hipeq._jit import kernel

MAX_STEPS = 200


@kernel
def rachford_rice(z, lnk, x, y):
    """beta in [0, 1] solving the Rachford-Rice equation (module docstring) for ln K ``lnk`` (clipped to
    +-700), clipped to the end of [0, 1] when the root lies outside; writes the normalised x and y."""
    nc = z.shape[0]
    f0 = 0.0
    f1 = 0.0
    for i in range(nc):  # x and y hold K - 1 and K while beta is sought
        k = math.exp(min(max(lnk[i], -700.0), 700.0))
        y[i] = k
        x[i] = k - 1.0
        f0 += z[i] * x[i]
        f1 += z[i] * x[i] / k
    if f0 <= 0.0:
        beta = 0.0
    elif f1 >= 0.0:
        beta = 1.0
    else:
        lo = 0.0
        hi = 1.0
        beta = 0.5
        for _ in range(MAX_STEPS):
            val = 0.0
            der = 0.0
            for i in range(nc):
                d = 1.0 + beta * x[i]
                val += z[i] * x[i] / d
                der -= z[i] * x[i] * x[i] / (d * d)
            if val > 0.0:
                lo = beta
            else:
                hi = beta
            new = beta - val / der if der < 0.0 else 0.5 * (lo + hi)
            if not (lo < new < hi):
                new = 0.5 * (lo + hi)
            if abs(new - beta) <= 1e-15 * max(beta, 1e-300) or hi - lo < 1e-16:
                beta = new
                break
            beta = new
    sx = 0.0
    sy = 0.0
    for i in range(nc):
        xi = z[i] / (1.0 + beta * x[i])
        yi = y[i] * xi
        x[i] = xi
        y[i] = yi
        sx += xi
        sy += yi
    for i in range(nc):
        x[i] /= sx
        y[i] /= sy
    return beta
