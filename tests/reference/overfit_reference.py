"""Independent recomputation of keel's overfitting statistics with numpy and scipy, written from
the papers' formulas (not from keel's code):

- Bailey, D. H. and López de Prado, M. (2014), "The Deflated Sharpe Ratio: Correcting for
  Selection Bias, Backtest Overfitting and Non-Normality", Journal of Portfolio Management
  40(5): the expected maximum Sharpe ratio of N unskilled trials and the deflated Sharpe ratio
  (the probabilistic Sharpe ratio against that maximum).
- Bailey, D. H., Borwein, J., López de Prado, M. and Zhu, Q. J. (2017), "The Probability of
  Backtest Overfitting", Journal of Computational Finance 20(4): combinatorially symmetric
  cross-validation (CSCV).

Conventions (stated in docs/methods-overfit.md): Sharpe ratio = mean / sample sd (ddof=1), per
period; skewness and kurtosis from population moments (scipy.stats defaults, kurtosis not in
excess); an undefined Sharpe ratio (fewer than two returns, zero deviation) ranks below every
defined one; ties in the out-of-sample ranking take their average rank (scipy.stats.rankdata).
"""
import itertools
import math

import numpy as np
from scipy import stats

EULER_GAMMA = np.euler_gamma


def sharpe(x):
    x = np.asarray(x, dtype=float)
    if x.size < 2:
        return None
    sd = np.std(x, ddof=1)
    if sd == 0:
        return None
    return float(np.mean(x) / sd)


def expected_max_sharpe(n, variance):
    if n < 2:
        return 0.0
    return math.sqrt(variance) * ((1 - EULER_GAMMA) * stats.norm.ppf(1 - 1 / n)
                                  + EULER_GAMMA * stats.norm.ppf(1 - 1 / (n * math.e)))


def deflated_sharpe(matrix):
    """matrix: T x N. Returns (best column, dict) for the column of highest Sharpe ratio."""
    m = np.asarray(matrix, dtype=float)
    srs = [sharpe(m[:, j]) for j in range(m.shape[1])]
    defined = [s for s in srs if s is not None]
    if not defined:
        return None, None
    best = int(np.argmax([s if s is not None else -np.inf for s in srs]))
    x = m[:, best]
    sr = srs[best]
    skew = float(stats.skew(x))
    kurt = float(stats.kurtosis(x, fisher=False))
    variance = float(np.var(defined, ddof=1)) if len(defined) >= 2 else 0.0
    sr0 = expected_max_sharpe(len(defined), variance)
    root = 1 - skew * sr + (kurt - 1) / 4 * sr ** 2
    if root <= 0:
        return best, None
    z = (sr - sr0) * math.sqrt(len(x) - 1) / math.sqrt(root)
    return best, {"sharpe": sr, "trials": len(defined), "trials_variance": variance,
                  "expected_max": sr0, "probability": float(stats.norm.cdf(z))}


def ranked_sharpes(block):
    """Each column's Sharpe ratio, an undefined one as -inf (below every defined one)."""
    sd = np.std(block, axis=0, ddof=1)
    mean = np.mean(block, axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(sd > 0, mean / np.where(sd > 0, sd, 1.0), -np.inf)


def pbo(matrix, s):
    m = np.asarray(matrix, dtype=float)
    t, n = m.shape
    length = t // s
    m = m[t - length * s:]  # the earliest rows that do not fill a block are left out
    blocks = [m[i * length:(i + 1) * length] for i in range(s)]
    logits = []
    for chosen in itertools.combinations(range(s), s // 2):
        rest = [b for b in range(s) if b not in chosen]
        j_in = np.vstack([blocks[b] for b in chosen])
        j_out = np.vstack([blocks[b] for b in rest])
        r_in, r_out = ranked_sharpes(j_in), ranked_sharpes(j_out)
        star = int(np.argmax(r_in))
        omega = stats.rankdata(r_out)[star] / (n + 1)
        logits.append(math.log(omega / (1 - omega)))
    return {"blocks": s, "rows_used": length * s, "combinations": len(logits),
            "probability": sum(1 for x in logits if x <= 0) / len(logits), "logits": logits}
