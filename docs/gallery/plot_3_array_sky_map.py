"""
Sky map of a pulsar array's sensitivity
=======================================

From a pulsar list the tool computes the noise budget itself: here the strain amplitude
h0 that reaches S/N = 5 on every HEALPix pixel at a GW frequency of 8 nHz, for the
invented demo array (its pulsars are the dots).  A forecast, not a limit.  The same as
``ptaconstrain threshold-map --array demo_array.ecsv --frequency "8 nHz"``.
"""

from astropy import units as u

from ptaconstrain import load_array
from ptaconstrain.data import path
from ptaconstrain.report.skyplot import sky_map_figure

array = load_array(path("demo_array.ecsv"))
thresholds = array.threshold_table([8.0] * u.nHz, snr=5.0, nside=16)
print(thresholds)

# %%
fig = sky_map_figure(
    thresholds.values[:, 0],
    pulsars=array.sky_markers(),
    title="Invented demo array: h0 for S/N >= 5 at 8 nHz (forecast)",
)
