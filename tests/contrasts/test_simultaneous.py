"""Simultaneous methods against scipy, published worked examples and exact identities."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

import nestfit
from nestfit import contrasts as nc
from nestfit.contrasts._mvt import MaxT
from nestfit.errors import ContrastError
from tests.contrasts._helpers import (
    groups_frame,
    load,
    printed,
    random_groups,
    samples,
    separate,
)

# scipy.stats.dunnett integrates with its default 1000 x dim points and gives no error
# estimate; its p-values differ from a precise integration by up to ~2e-4 in our checks.
SCIPY_DUNNETT_P = 5e-4


def _pair_index(label: str, levels: tuple[str, ...]) -> tuple[int, int]:
    a, b = label.split(" - ")
    return levels.index(a), levels.index(b)


@pytest.mark.parametrize("seed", range(3))
def test_tukey_against_scipy_tukey_hsd(seed: int) -> None:
    """Tukey-Kramer p-values and intervals equal scipy.stats.tukey_hsd's (1e-10) on random
    unbalanced data; both use scipy.stats.studentized_range."""
    data = random_groups(seed, [4, 9, 6, 12, 5], spread=0.7)
    means = nc.cell_means(separate(data))
    result = means.family(nc.all_pairs()).adjust("tukey")
    ref = stats.tukey_hsd(*samples(data))
    ci = ref.confidence_interval(0.95)
    for row in result.rows:
        i, j = _pair_index(row.label, means.levels)
        assert row.estimate == pytest.approx(ref.statistic[i, j], abs=1e-12)
        assert row.p_adjusted == pytest.approx(ref.pvalue[i, j], abs=1e-10)
        assert row.lower == pytest.approx(ci.low[i, j], abs=1e-10)
        assert row.upper == pytest.approx(ci.high[i, j], abs=1e-10)


@pytest.mark.parametrize("alternative", ["two-sided", "greater", "less"])
def test_dunnett_against_scipy_dunnett(alternative: str) -> None:
    """Dunnett p-values against scipy.stats.dunnett on random unbalanced data, within our
    integration error plus SCIPY_DUNNETT_P; scipy's interval (its critical value solved to
    a stated confidence within 10 * 1e-3 * alpha) has our coverage probability within
    5e-4 + our error of the level."""
    data = random_groups(3, [8, 5, 9, 6, 11], spread=0.7)
    means = nc.cell_means(separate(data))
    result = means.family(nc.versus_control("L0")).adjust("dunnett", rng=1,
                                                          alternative=alternative)
    s = samples(data)
    ref = stats.dunnett(*s[1:], control=s[0], alternative=alternative,
                        rng=np.random.default_rng(2))
    err = result.integration_error
    assert err is not None and err < 5e-4
    np.testing.assert_allclose(result.p_adjusted, ref.pvalue, rtol=0,
                               atol=err + SCIPY_DUNNETT_P)
    ci = ref.confidence_interval(0.95)
    fam = means.family(nc.versus_control("L0"))
    est = np.array([e.estimate for e in fam])
    se = np.array([e.std_error for e in fam])
    limit = ci.low if alternative != "less" else ci.high
    c_scipy = float(np.median(np.abs(est - limit) / se))
    dist = MaxT(fam.correlation, fam.df, two_sided=alternative == "two-sided",
                rng=np.random.default_rng(5))
    coverage, cov_err = dist.cdf(c_scipy)
    assert coverage[0] == pytest.approx(0.95, abs=5e-4 + cov_err[0])
    assert result.critical_value == pytest.approx(c_scipy, rel=2e-3)


def _nist_means(name: str) -> nc.CellMeans:
    return nc.cell_means(separate(groups_frame(load(name)["data"]["groups"])))


def test_nist_tukey_example() -> None:
    """NIST/SEMATECH e-Handbook 7.4.7.1 (nist_handbook_tukey_4group.json): the 12 published
    limits of the simultaneous 95% intervals, to the 2 decimals printed."""
    case = load("nist_handbook_tukey_4group.json")
    means = _nist_means("nist_handbook_tukey_4group.json")
    published = case["published_results"]["simultaneous_95pct_intervals"]
    specs = [label.replace("mu", "level_") for label in published]
    result = means.family(specs).adjust("tukey")
    for row, (_label, (low, high)) in zip(result.rows, published.items()):
        printed(row.lower, low)
        printed(row.upper, high)
    # q(0.05; 4, 16) = 4.05 is marked "from memory" in the file; the computed 4.0460931:
    assert result.critical_value * np.sqrt(2) == pytest.approx(4.0460931, abs=5e-7)


def test_nist_scheffe_example() -> None:
    """NIST/SEMATECH e-Handbook 7.4.7.2 (nist_handbook_scheffe.json): C1 and C2 with
    q = r - 1 = 3 (every contrast of the 4 means): multiplier 3.12, variance .2661, SE .5158,
    limits -2.108 (implied), 1.108, -1.268, 1.948 as printed."""
    case = load("nist_handbook_scheffe.json")
    pub = case["published_results"]
    fam = _nist_means("nist_handbook_scheffe.json").family(
        ["C1 = (level_1 + level_2)/2 - (level_3 + level_4)/2",
         "C2 = (level_1 + level_3)/2 - (level_2 + level_4)/2"])
    result = fam.adjust("scheffe", span="all")
    printed(result.critical_value, pub["scheffe_multiplier"])
    c1, c2 = result.rows
    printed(c1.estimate, pub["C1_estimate"])
    printed(c2.estimate, pub["C2_estimate"])
    printed(c1.std_error ** 2, pub["variance_of_each_contrast"])
    printed(c1.std_error, pub["standard_error"], slack=2.0)  # printed truncated (0.51590)
    printed(c1.lower, pub["C1_interval"][0].split()[0])
    printed(c1.upper, pub["C1_interval"][1])
    printed(c2.lower, pub["C2_interval"][0])
    printed(c2.upper, pub["C2_interval"][1])
    assert "q = 3" in " ".join(result.notes)
    # span='family' protects only the 2-dimensional span of C1 and C2: a smaller multiplier.
    assert fam.adjust("scheffe").critical_value == pytest.approx(
        np.sqrt(2 * stats.f.ppf(0.95, 2, 16)), rel=1e-12)


def test_nist_bonferroni_example() -> None:
    """NIST/SEMATECH e-Handbook 7.4.7.3 (nist_handbook_bonferroni.json): t(1 - 0.05/4; 16) =
    2.473 printed; limits -.5 -/+ 2.473 (.5158) and .34 -/+ 2.473 (.5158)."""
    case = load("nist_handbook_bonferroni.json")
    fam = _nist_means("nist_handbook_bonferroni.json").family(
        ["C1 = (level_1 + level_2)/2 - (level_3 + level_4)/2",
         "C2 = (level_1 + level_3)/2 - (level_2 + level_4)/2"])
    result = fam.adjust("bonferroni")
    printed(result.critical_value, case["published_results"]["t_value"].split("=")[-1])
    computed = case["reproduction"]["values"]  # the printed formulas, evaluated (file)
    for row, key in zip(result.rows, ("C1_interval", "C2_interval")):
        assert (row.lower, row.upper) == pytest.approx(
            tuple(float(v) for v in computed[key]), abs=5e-6)
        # and the printed formula itself, with the printed rounded numbers:
        assert row.lower == pytest.approx(row.estimate - 2.473 * 0.5158, abs=2e-3)


def test_harter_studentized_range_via_tukey() -> None:
    """Harter (1960) Table 3 (harter_studentized_range_q_0.05.json): the Tukey critical value
    times sqrt(2) is q(0.05; k, nu) for every finite nu in the file (data with k levels and
    k + nu observations). The file reports the table exact to 6e-5 in probability, not in
    its last digit (e.g. nu = 10, k = 8: 5.305 printed, 5.3042 exact), so the tolerance is
    1e-4 in probability, carried to the q scale by the density."""
    case = load("harter_studentized_range_q_0.05.json")
    table = case["published_results"]["q_0.05_table_rows_nu_cols_k"]
    for nu, row in table.items():
        if nu == "inf":
            continue
        for k, text in row.items():
            kk, df = int(k), int(nu)
            sizes = [1] * kk
            for i in range(df):
                sizes[i % kk] += 1
            data = random_groups(kk + df, sizes)
            fam = nc.cell_means(separate(data)).family(["L0 - L1"])
            result = fam.adjust("tukey") if kk == 2 else _tukey_k(data, kk)
            q = float(text)
            tol = 1e-4 / stats.studentized_range.pdf(q, kk, df)
            assert result.critical_value * np.sqrt(2) == pytest.approx(q, abs=tol), (k, nu)


def _tukey_k(data, k: int) -> nc.FamilyResult:  # type: ignore[no-untyped-def]
    """Tukey over k means, using only the pairs with L0 (the range still spans k means)."""
    labels = [f"L0 - L{j}" for j in range(1, k)] + ["L1 - L2"]
    return nc.cell_means(separate(data)).family(labels).adjust("tukey")


def test_max_t_equals_tukey_on_balanced_data() -> None:
    """Balanced all pairs: the max-|t| distribution is the studentized range, so max-t's
    critical value and adjusted p-values equal Tukey's within the integration error."""
    data = random_groups(12, [6, 6, 6, 6, 6], spread=0.6)
    fam = nc.cell_means(separate(data)).family(nc.all_pairs())
    tukey = fam.adjust("tukey")
    maxt = fam.adjust("max-t", rng=3)
    err = maxt.integration_error
    assert err is not None and err < 5e-4
    np.testing.assert_allclose(maxt.p_adjusted, tukey.p_adjusted, atol=err + 1e-6)
    assert maxt.critical_value == pytest.approx(tukey.critical_value, abs=5e-3)


def test_max_t_versus_tukey_kramer_unbalanced() -> None:
    """Unequal sizes: Tukey-Kramer is conservative (Hayter 1984), so the exact max-t adjusted
    p-values are no larger (up to the integration error)."""
    data = random_groups(13, [3, 12, 5, 9, 4], spread=0.6)
    fam = nc.cell_means(separate(data)).family(nc.all_pairs())
    tukey, maxt = fam.adjust("tukey"), fam.adjust("max-t", rng=4)
    assert maxt.integration_error is not None
    assert np.all(maxt.p_adjusted <= tukey.p_adjusted + maxt.integration_error)
    assert maxt.critical_value <= tukey.critical_value + 1e-3


def test_max_t_equals_dunnett() -> None:
    """Dunnett is max-t on a many-to-one family: same result within the integration error
    (different seeds)."""
    data = random_groups(14, [7, 5, 9, 6], spread=0.6)
    fam = nc.cell_means(separate(data)).family(nc.versus_control("L2"))
    dunnett, maxt = fam.adjust("dunnett", rng=5), fam.adjust("max-t", rng=6)
    assert dunnett.integration_error is not None and maxt.integration_error is not None
    tol = dunnett.integration_error + maxt.integration_error
    np.testing.assert_allclose(dunnett.p_adjusted, maxt.p_adjusted, atol=tol)
    assert "control L2" in dunnett.method_name


def test_dunnett_with_one_treatment_is_the_two_sample_t_test() -> None:
    """Two groups: Dunnett's one comparison is the pooled two-sample t test
    (scipy.stats.ttest_ind with equal variances)."""
    data = random_groups(15, [7, 10], spread=1.0)
    result = nc.cell_means(separate(data)).family(nc.versus_control("L0")).adjust(
        "dunnett", rng=7)
    s = samples(data)
    ref = stats.ttest_ind(s[1], s[0], equal_var=True)
    ci = ref.confidence_interval(0.95)
    row = result.rows[0]
    assert row.t == pytest.approx(ref.statistic, rel=1e-10)
    assert result.integration_error is not None
    assert row.p_adjusted == pytest.approx(ref.pvalue, abs=result.integration_error + 1e-12)
    assert (row.lower, row.upper) == pytest.approx((ci.low, ci.high), rel=1e-9)


def test_single_contrast_identities() -> None:
    """One contrast: max-t, Scheffe (q = 1) and every p-value adjustment give the t test."""
    means = nc.cell_means(separate(random_groups(16, [5, 8, 6])))
    fam = means.family(["L0 - mean(L1, L2)"])
    e = fam.estimates[0]
    lo, hi = e.conf_int(0.95)
    for method in ("none", "bonferroni", "holm", "sidak", "hommel", "bh", "by", "scheffe"):
        r = fam.adjust(method)
        assert r.rows[0].p_adjusted == pytest.approx(e.p, rel=1e-9), method
        assert (r.rows[0].lower, r.rows[0].upper) == pytest.approx((lo, hi), rel=1e-9), method
    for method in ("max-t", "step-down-max-t"):
        r = fam.adjust(method, rng=8)
        assert r.integration_error is not None
        assert r.rows[0].p_adjusted == pytest.approx(e.p, abs=r.integration_error + 1e-12)
        assert (r.rows[0].lower, r.rows[0].upper) == pytest.approx((lo, hi), rel=1e-9)


@pytest.mark.parametrize("seed", range(3))
def test_step_down_rejects_at_least_holm(seed: int) -> None:
    """Step-down max-t p-values never exceed Holm's (each step's max-|t| tail is at most the
    Bonferroni bound over the remaining hypotheses); on correlated contrasts they are
    strictly smaller, and never smaller than the single-step max-t values' lower bound p."""
    data = random_groups(30 + seed, [6, 4, 9, 7, 5], spread=0.9)
    fam = nc.cell_means(separate(data)).family(nc.versus_control("L0"))
    holm = fam.adjust("holm")
    step = fam.adjust("step-down-max-t", rng=seed)
    single = fam.adjust("max-t", rng=seed)
    assert np.all(step.p_adjusted <= holm.p_adjusted + 1e-15)
    assert np.all(step.p_adjusted <= single.p_adjusted + 2 * (single.integration_error or 0))
    for alpha in (0.01, 0.05, 0.1, 0.2):
        assert set(np.flatnonzero(holm.p_adjusted <= alpha)) <= \
            set(np.flatnonzero(step.p_adjusted <= alpha))
    raw = np.array([r.p for r in step.rows])
    assert np.all(step.p_adjusted >= raw - 1e-15)
    smallest = int(np.argmin(raw))
    assert step.p_adjusted[smallest] < holm.p_adjusted[smallest]


def test_bonferroni_and_sidak_intervals_and_one_sided() -> None:
    means = nc.cell_means(separate(random_groups(17, [6, 7, 8, 5])))
    fam = means.family(nc.versus_control("L0"))
    m, df = len(fam), fam.df
    bonf = fam.adjust("bonferroni", level=0.9)
    assert bonf.critical_value == pytest.approx(stats.t.ppf(1 - 0.1 / (2 * m), df), rel=1e-12)
    sidak = fam.adjust("sidak", level=0.9)
    assert sidak.critical_value == pytest.approx(
        stats.t.ppf(1 - (1 - 0.9 ** (1 / m)) / 2, df), rel=1e-10)
    one = fam.adjust("bonferroni", alternative="greater")
    assert one.critical_value == pytest.approx(stats.t.ppf(1 - 0.05 / m, df), rel=1e-12)
    assert all(np.isinf(r.upper) for r in one.rows)
    holm = fam.adjust("holm")
    assert holm.interval == "simultaneous (Bonferroni)"
    assert any("no intervals of its own" in n for n in holm.notes)
    bh = fam.adjust("bh")
    assert bh.error_rate == "false discovery rate"
    assert bh.interval.startswith("per-contrast")


def test_reproducible_with_a_seed() -> None:
    fam = nc.cell_means(separate(random_groups(18, [5, 7, 6, 8]))).family(nc.all_pairs())
    a = fam.adjust("max-t", rng=42)
    b = fam.adjust("max-t", rng=np.random.default_rng(42))
    assert a.critical_value == b.critical_value
    np.testing.assert_array_equal(a.p_adjusted, b.p_adjusted)
    c = fam.adjust("max-t", rng=43)
    assert c.critical_value != a.critical_value  # a different seed: a different estimate
    assert c.critical_value == pytest.approx(a.critical_value, abs=5e-3)


def test_methods_refused_with_reasons() -> None:
    data = random_groups(19, [5, 6, 7, 8])
    means = nc.cell_means(separate(data))
    planned = means.family(["L0 - mean(L1, L2)", "L1 - L3"])
    with pytest.raises(ContrastError, match=r"tukey needs pairwise differences.*'L0 - mean"):
        planned.adjust("tukey")
    with pytest.raises(ContrastError, match=r"dunnett needs a many-to-one family.*not a "
                                            r"difference of two levels"):
        planned.adjust("dunnett")
    with pytest.raises(ContrastError, match="share no single common level"):
        means.family(nc.consecutive()).adjust("dunnett")
    with pytest.raises(ContrastError, match="compared with the control more than once"):
        means.family(["a = L1 - L0", "b = L2 - L0", "c = L1 - L0"]).adjust("dunnett")
    with pytest.raises(ContrastError, match="tukey gives two-sided intervals only"):
        means.family(nc.all_pairs()).adjust("tukey", alternative="greater")
    with pytest.raises(ContrastError, match="scheffe gives two-sided intervals only"):
        planned.adjust("scheffe", alternative="less")
    data["x"] = np.random.default_rng(1).normal(size=len(data))
    adjusted = nc.cell_means(nestfit.fit("y ~ C(g) + x", data), "g", data)
    with pytest.raises(ContrastError, match="tukey assumes independent level means"):
        adjusted.family(nc.all_pairs()).adjust("tukey")
    assert adjusted.family(nc.all_pairs()).adjust("max-t", rng=1).rows


def test_result_conversions_and_text() -> None:
    means = nc.cell_means(separate(random_groups(20, [6, 7, 8])))
    result = means.family(nc.all_pairs()).adjust("holm", alternative="greater")
    frame = result.to_frame()
    assert list(frame.columns) == ["label", "weights", "estimate", "std_error", "df", "t", "p",
                                   "p_adjusted", "lower", "upper", "method"]
    d = result.to_dict()
    assert d["method"] == "holm" and d["level"] == 0.95
    assert set(d["contrasts"][0]) == {"label", "weights", "estimate", "std_error", "df", "t",
                                      "p", "p_adjusted", "lower", "upper"}
    assert d["contrasts"][0]["upper"] is None  # one-sided: no upper limit
    import json

    json.dumps(d, allow_nan=False)
    text = str(result)
    for piece in ("Holm (step-down Bonferroni)", "family-wise error rate", "adjusted p",
                  "Assumptions", "qualified statistician", "one-sided (greater than 0)"):
        assert piece in text
    assert result.rejected(0.5) == tuple(r.p_adjusted <= 0.5 for r in result.rows)
    with pytest.raises(nestfit.errors.DataError, match="alpha must be between 0 and 1"):
        result.rejected(2.0)
