// Overfitting statistics for a set of back-tested variants of one rule.
// Formulas, papers and equations: docs/methods-overfit.md.
//
// Contract
//  - Returns are per-period simple returns as fractions (a month: 0.01 = 1 %).
//    Every Sharpe ratio here is per period and not annualized: the mean over
//    the sample standard deviation (n - 1 divisor), no risk-free rate. It is
//    undefined (nullopt) for fewer than two returns or a zero deviation.
//  - moments(): mean, sample standard deviation, and the skewness and
//    kurtosis from the population moments (m3 / m2^1.5, m4 / m2^2; a normal
//    distribution's kurtosis is 3), as scipy.stats.skew and
//    scipy.stats.kurtosis(fisher=False) compute them by default.
//  - expected_max_sharpe(): Bailey and López de Prado (2014), "The Deflated
//    Sharpe Ratio", the expected maximum of N trials' Sharpe ratios when no
//    trial has skill: sqrt(V) ((1 - g) Z^-1(1 - 1/N) + g Z^-1(1 - 1/(N e))),
//    g the Euler-Mascheroni constant. 0 for a single trial (nothing chosen).
//  - deflated_sharpe(): the same paper: Z((SR - SR0) sqrt(T - 1) /
//    sqrt(1 - skew SR + (kurtosis - 1) / 4 SR^2)) for the chosen trial's T
//    returns, SR0 from the defined Sharpe ratios of all trials (their sample
//    variance; 0 for fewer than two). nullopt when the chosen trial's Sharpe
//    ratio is undefined or the root's argument is not positive.
//  - pbo(): Bailey, Borwein, López de Prado and Zhu (2017), "The Probability
//    of Backtest Overfitting", combinatorially symmetric cross-validation of
//    a T x N matrix given as N columns of T returns: the first T mod S rows
//    are left out, the rest split into S blocks of equal length in order;
//    for every choice of S/2 blocks as in-sample (the rest out of sample) the
//    trial with the highest in-sample Sharpe ratio (the first on ties) is
//    ranked among the out-of-sample Sharpe ratios (1 = lowest, ties share
//    their mean rank, an undefined ratio is below every defined one); with
//    w = rank / (N + 1) the logit is ln(w / (1 - w)), and PBO is the share of
//    logits <= 0. Throws std::invalid_argument unless N >= 2, S is even and at
//    least 2, every column has T rows and T >= 2 S (two rows a block).
//  - pbo_blocks(): the S used for T rows: the largest even S <= 16 (the
//    paper's example) with at least two rows a block; 0 when T < 4.
#pragma once

#include <optional>
#include <span>
#include <vector>

namespace keel::perf {

struct Moments {
  int n = 0;
  double mean = 0;
  std::optional<double> sd;  // sample, n - 1
  std::optional<double> skew, kurtosis;
};

Moments moments(std::span<const double> xs);

std::optional<double> sharpe_ratio(std::span<const double> returns);

double expected_max_sharpe(int trials, double sharpe_variance);

struct DeflatedSharpe {
  double sharpe = 0;  // the chosen trial's, per period
  int observations = 0;
  double skew = 0;
  double kurtosis = 0;
  int trials = 0;              // trials with a defined Sharpe ratio
  double trials_variance = 0;  // sample variance of their Sharpe ratios
  double expected_max = 0;     // SR0
  double probability = 0;      // DSR
};

std::optional<DeflatedSharpe> deflated_sharpe(std::span<const double> chosen_returns,
                                              std::span<const double> trial_sharpes);

struct Pbo {
  int blocks = 0;
  int rows_used = 0;
  int combinations = 0;
  double probability = 0;
  std::vector<double>
      logits;  // one per combination, in lexicographic order of the in-sample blocks
};

int pbo_blocks(int rows);

Pbo pbo(const std::vector<std::vector<double>>& columns, int blocks);

}  // namespace keel::perf
