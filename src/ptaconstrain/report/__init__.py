"""Report layer: tables (ECSV), text summaries, figures and provenance of results.

Figures are :class:`matplotlib.figure.Figure` objects made without pyplot;
matplotlib is imported only inside the functions that draw.
"""

from .comparison import comparison_figure
from .epochs import epoch_figure, epoch_table
from .figures import REGION_STYLE, exclusion_figure, save_figure
from .overview import overview_figure
from .probability_plot import add_probability_contours, probability_columns
from .provenance import provenance, safe_name
from .style import MSUN, minor_ticks_as_markers, sci_text, unicode_log_ticks
from .tables import credible_summary_lines, exclusion_table, format_quantity, summary_lines

__all__ = [
    "REGION_STYLE",
    "exclusion_figure",
    "save_figure",
    "overview_figure",
    "add_probability_contours",
    "probability_columns",
    "provenance",
    "safe_name",
    "exclusion_table",
    "summary_lines",
    "credible_summary_lines",
    "format_quantity",
    "MSUN",
    "sci_text",
    "unicode_log_ticks",
    "minor_ticks_as_markers",
    "comparison_figure",
    "epoch_table",
    "epoch_figure",
]
