"""keel's overfitting statistics (src/perf/overfit.h) agree with an independent numpy/scipy
recomputation written from the papers (tests/reference/overfit_reference.py) to 1e-12 on
invented return matrices, including the limiting cases: a single trial, identical trials,
a trial that never moves, and a trial with real skill among noise.

Runs the overfit_probe test driver named by KEEL_OVERFIT_PROBE.
"""
import json
import math
import os
import subprocess
import sys
import unittest

import numpy as np

sys.path.insert(0, os.path.join(os.environ.get("KEEL_SOURCE_DIR", "."), "tests", "reference"))
import overfit_reference as ref  # noqa: E402

PROBE = os.environ.get("KEEL_OVERFIT_PROBE")
TOL = 1e-12


def probe(matrix, blocks):
    m = np.asarray(matrix, dtype=float)
    doc = {"columns": [list(map(float, m[:, j])) for j in range(m.shape[1])], "blocks": blocks}
    p = subprocess.run([PROBE], input=json.dumps(doc), capture_output=True, text=True, check=True)
    return json.loads(p.stdout)


def noise(seed, t, n, scale=0.04):
    """Invented monthly returns: N unskilled trials of T months, fat-tailed (Student t, 5 df)."""
    rng = np.random.default_rng(seed)
    return 0.002 + scale * rng.standard_t(5, size=(t, n)) / math.sqrt(5 / 3)


class OverfitReference(unittest.TestCase):
    def close(self, got, want, what):
        if want is None:
            self.assertIsNone(got, what)
            return
        self.assertIsNotNone(got, what)
        self.assertLessEqual(abs(got - want), TOL * max(1.0, abs(want)), f"{what}: {got} vs {want}")

    def compare(self, matrix, blocks):
        got = probe(matrix, blocks)
        m = np.asarray(matrix, dtype=float)
        for j in range(m.shape[1]):
            self.close(got["sharpe"][j], ref.sharpe(m[:, j]), f"sharpe of column {j}")
        best, dsr = ref.deflated_sharpe(m)
        self.assertEqual(got["best"], best)
        if dsr is None:
            self.assertIsNone(got["dsr"])
        else:
            for key in ("sharpe", "trials_variance", "expected_max", "probability"):
                self.close(got["dsr"][key], dsr[key], f"deflated Sharpe: {key}")
            self.assertEqual(got["dsr"]["trials"], dsr["trials"])
        if m.shape[1] >= 2:
            want = ref.pbo(m, blocks)
            for key in ("blocks", "rows_used", "combinations"):
                self.assertEqual(got["pbo"][key], want[key], key)
            self.close(got["pbo"]["probability"], want["probability"], "PBO")
            self.assertEqual(len(got["pbo"]["logits"]), len(want["logits"]))
            for i, (a, b) in enumerate(zip(got["pbo"]["logits"], want["logits"])):
                self.close(a, b, f"logit {i}")
        return got

    def test_noise_sixty_trials_sixteen_blocks(self):
        got = self.compare(noise(1, 120, 60), 16)
        self.assertEqual(got["pbo"]["combinations"], 12870)  # C(16, 8)
        # Unskilled trials: the in-sample best is a coin toss out of sample.
        self.assertGreater(got["pbo"]["probability"], 0.3)

    def test_rows_that_do_not_fill_a_block_are_left_out(self):
        got = self.compare(noise(2, 39, 7), 6)
        self.assertEqual(got["pbo"]["rows_used"], 36)

    def test_one_trial_with_skill_among_noise(self):
        m = noise(3, 96, 20)
        m[:, 4] += 0.03  # a real edge, every month
        got = self.compare(m, 8)
        self.assertEqual(got["best"], 4)
        self.assertLess(got["pbo"]["probability"], 0.05)
        self.assertGreater(got["dsr"]["probability"], 0.95)

    def test_single_trial_has_no_selection_to_deflate(self):
        got = self.compare(noise(4, 48, 1), 8)
        self.assertEqual(got["dsr"]["expected_max"], 0.0)
        self.assertIsNone(got["pbo"])

    def test_identical_trials_give_logits_of_zero(self):
        column = noise(5, 48, 1)
        got = self.compare(np.hstack([column] * 5), 8)
        self.assertEqual(got["dsr"]["trials_variance"], 0.0)
        self.assertEqual(got["dsr"]["expected_max"], 0.0)
        self.assertEqual(set(got["pbo"]["logits"]), {0.0})
        self.assertEqual(got["pbo"]["probability"], 1.0)

    def test_a_trial_that_never_moves_has_no_sharpe_ratio(self):
        m = noise(6, 40, 4)
        m[:, 2] = 0.0  # all cash
        got = self.compare(m, 4)
        self.assertIsNone(got["sharpe"][2])
        self.assertEqual(got["dsr"]["trials"], 3)

    def test_blocks_chosen_for_short_histories(self):
        for rows, blocks in [(3, 0), (4, 2), (11, 4), (24, 12), (31, 14), (32, 16), (240, 16)]:
            got = probe(noise(7, rows, 2), 0)
            self.assertEqual(got["pbo_blocks_for_rows"], blocks, f"{rows} rows")


if __name__ == "__main__":
    if not PROBE:
        sys.exit("KEEL_OVERFIT_PROBE is not set; run through ctest")
    unittest.main()
