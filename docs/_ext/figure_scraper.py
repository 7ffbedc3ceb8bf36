"""sphinx-gallery image scraper for matplotlib Figures made without pyplot.

The library draws on :class:`matplotlib.figure.Figure` objects directly, so the
default (pyplot) scraper would see nothing; this one saves every new Figure bound to
a name in the example's globals.  Named in ``docs/conf.py`` by module, so the
configuration stays picklable.
"""


def scrape(block, block_vars, gallery_conf):
    """Save the Figures not yet shown and return their reST."""
    from matplotlib.figure import Figure
    from sphinx_gallery.scrapers import figure_rst

    shown = block_vars.setdefault("_ptaconstrain_shown", set())
    paths = []
    for value in list(block_vars["example_globals"].values()):
        if isinstance(value, Figure) and id(value) not in shown:
            shown.add(id(value))
            path = next(block_vars["image_path_iterator"])
            value.savefig(path, dpi=110)
            paths.append(path)
    return figure_rst(paths, gallery_conf["src_dir"])


def _get_sg_image_scraper():
    """The hook sphinx-gallery calls for a scraper named by module."""
    return scrape
