#!/usr/bin/python3
"""Reference site allele frequencies from genotype likelihoods (NumPy).

An implementation independent of fgauge's Go code, used by
stats/likelihood_test.go (TestSiteFreqEMNumPy). Reads one site per line on
stdin: 3n phred-scaled likelihoods (0/0, 0/1, 1/1 per sample, integers,
space-separated). Prints one line per site: the maximum-likelihood
alternate-allele frequency under Hardy-Weinberg proportions, with 17
significant digits, or "nan" when no sample has informative likelihoods.

Method: the EM of Kim et al. 2011 (BMC Bioinformatics 12:231) and Li 2011
(Bioinformatics 27:2987), vectorised over all samples (no grouping), started
at 0.5 and run to |step| < 1e-15 (at most 10^6 iterations), then polished
by Newton steps on the log-likelihood sum_i log(sum_g P(g|f) L_i(g)).
Samples whose three values are equal carry a constant likelihood; they are
kept (they do not move the maximum).
Needs python3-numpy (Debian).
"""
import sys
import numpy as np


def mle(pl):
    pl = pl.reshape(-1, 3).astype(float)
    lik = 10.0 ** (-(pl - pl.min(axis=1, keepdims=True)) / 10.0)
    if np.all(pl.max(axis=1) == pl.min(axis=1)):
        return float("nan")
    f = 0.5
    for _ in range(10**6):
        prior = np.array([(1 - f) ** 2, 2 * f * (1 - f), f * f])
        post = lik * prior
        post /= post.sum(axis=1, keepdims=True)
        nf = (post[:, 1] + 2 * post[:, 2]).sum() / (2 * len(pl))
        done = abs(nf - f) < 1e-15
        f = nf
        if done:
            break
    for _ in range(20):
        if f <= 0 or f >= 1:
            break
        a = lik[:, 0] * (1 - f) ** 2 + lik[:, 1] * 2 * f * (1 - f) + lik[:, 2] * f * f
        da = -2 * (1 - f) * lik[:, 0] + (2 - 4 * f) * lik[:, 1] + 2 * f * lik[:, 2]
        d2a = 2 * lik[:, 0] - 4 * lik[:, 1] + 2 * lik[:, 2]
        g = (da / a).sum()
        h = (d2a / a - (da / a) ** 2).sum()
        if h >= 0:
            break
        step = -g / h
        if not 0 < f + step < 1:
            break
        f += step
        if abs(step) < 1e-16:
            break
    return f


for line in sys.stdin:
    v = np.array(line.split(), dtype=np.int64)
    print("%.17g" % mle(v))
