"""
Probability contours from a host's uncertainties
=================================================

A measured mass has an error (here 0.2 dex) and so does the distance (10%); the mass was
derived at 100 Mpc, so each sampled distance rescales its sample's mass.  The map gives,
per period, the mass ratio above which companions are excluded with 50%, 90% and 95%
probability, drawn as contours over the best-fit map.
"""

from astropy import units as u

from ptaconstrain import Host, exclusion_probability, load_curve
from ptaconstrain.data import path
from ptaconstrain.report import credible_summary_lines

host = Host(
    "Invented galaxy B",
    2e10 * u.Msun,
    100 * u.Mpc,
    mass_err_dex=0.2,
    distance_err_frac=0.1,
    mass_distance=100 * u.Mpc,
)
curve = load_curve(path("synthetic_h0_limit.ecsv"))
prob = exclusion_probability(host, curve, samples=20_000, seed=1)
for line in credible_summary_lines(prob):
    print(line)

# %%
fig = prob.plot()
