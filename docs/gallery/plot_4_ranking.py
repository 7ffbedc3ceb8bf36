"""
Ranking a catalogue: sky map and cumulative expected number
===========================================================

The 400 fictional galaxies of the invented demo catalogue, ranked as continuous-wave
targets against the synthetic 95% upper limit by the expected number of excluded
binaries (an illustrative merger rate; the order does not depend on it).  The same as
``ptaconstrain rank demo_catalogue.ecsv --curve synthetic_h0_limit.ecsv``.
"""

from ptaconstrain import load_curve, rank_catalog
from ptaconstrain.data import path
from ptaconstrain.report.rankplots import cumulative_figure

ranking = rank_catalog(path("demo_catalogue.ecsv"), load_curve(path("synthetic_h0_limit.ecsv")))
for line in ranking.summary_lines(top=5):
    print(line)

# %%
# Where the targets are, coloured by the metric; the best 20 carry their rank.
sky = ranking.plot(top=20)

# %%
# How the expected number accumulates down the ranking.
cumulative = cumulative_figure(
    ranking.to_table(),
    ranking.verb,
    ranking.label,
    top=20,
    rate=ranking.meta.get("merger_rate_per_galaxy"),
)
