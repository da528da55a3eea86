"""Stratified 2 x 2 reference values from statsmodels (Debian python3-statsmodels).

Prints, as JSON, statsmodels.stats.contingency_tables.StratifiedTable results for the
three table sets of statsmodels' own tests (statsmodels/stats/tests/
test_contingency_tables.py, classes TestStratified1, TestStratified2, TestStratified3),
whose published values those tests pin. Run with Debian's interpreter:
    /usr/bin/python3 tests/reference/python/stratified_tables.py
Each table is [[a, b], [c, d]]: row 0 exposed, column 0 event.
"""
import json

import numpy as np
import statsmodels
from statsmodels.stats.contingency_tables import StratifiedTable

CASES = {
    "TestStratified1": [[[0, 0], [6, 5]], [[3, 0], [3, 6]], [[6, 2], [0, 4]], [[5, 6], [1, 0]], [[2, 5], [0, 0]]],
    "TestStratified2": [[[20, 14], [10, 24]], [[15, 12], [3, 15]], [[3, 2], [3, 2]], [[12, 3], [7, 5]], [[1, 0], [3, 2]]],
    "TestStratified3": [[[313, 512], [19, 89]], [[207, 353], [8, 17]], [[205, 120], [391, 202]], [[278, 139], [244, 131]],
                        [[138, 53], [299, 94]], [[351, 22], [317, 24]]],
}

out = {"statsmodels": statsmodels.__version__, "cases": {}}
for name, tables in CASES.items():
    st = StratifiedTable([np.asarray(t) for t in tables])
    lcb, ucb = st.oddsratio_pooled_confint()
    null = st.test_null_odds(correction=True)
    entry = {
        "tables": tables,
        "oddsRatio": float(st.oddsratio_pooled),
        "logOddsSe": float(st.logodds_pooled_se),
        "oddsRatioLower": float(lcb),
        "oddsRatioUpper": float(ucb),
        "riskRatio": float(st.riskratio_pooled),
        "cmhStatistic": float(null.statistic),
        "cmhP": float(null.pvalue),
    }
    if name != "TestStratified1":
        bd = st.test_equal_odds(adjust=False)
        tarone = st.test_equal_odds(adjust=True)
        entry.update({"breslowDay": float(bd.statistic), "breslowDayP": float(bd.pvalue),
                      "tarone": float(tarone.statistic), "taroneP": float(tarone.pvalue)})
    out["cases"][name] = entry
print(json.dumps(out))
