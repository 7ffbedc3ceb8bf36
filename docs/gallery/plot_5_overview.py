"""
Overview: several hosts, an exclusion and a forecast
====================================================

The largest companion mass ratio allowed against period for each invented demo host:
solid against the synthetic 95% upper limit (an exclusion), dashed against the synthetic
future noise budget (a forecast, S/N >= 5).  The demo writes this figure as
``demo_overview.png``.
"""

from astropy.table import QTable

from ptaconstrain import exclusion_map, load_curve
from ptaconstrain.binary import hosts_from_table
from ptaconstrain.data import path
from ptaconstrain.report import overview_figure

hosts = hosts_from_table(QTable.read(path("demo_hosts.ecsv")))
limit = load_curve(path("synthetic_h0_limit.ecsv"))
future = load_curve(path("synthetic_future_psd.ecsv"))
exclusions = [exclusion_map(h, limit) for h in hosts]
forecasts = [exclusion_map(h, future) for h in hosts]
print([h.name for h in hosts])

# %%
fig = overview_figure(exclusions, forecasts, title="Invented demo hosts")
