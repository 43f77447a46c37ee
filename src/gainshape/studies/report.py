"""A study's summaries: the band change by groups of recordings, the methods paragraph, and
the HTML report with its figure."""

from __future__ import annotations

import re
from pathlib import Path

from .._files import atomic_output
from ..record.recipes import recipe_design, recipe_from_content
from .finding import ENTITIES


def study_band_change(results, found, out_dir: Path):
    """Every filtered recording's band change along "recording", written as netCDF."""
    import xarray as xr

    parts = [extras["band_change"].expand_dims(recording=[row[0]]).assign_coords(
                 {name: ("recording", [value or ""]) for name, value in zip(ENTITIES, entities)})
             for (row, extras), (_, _, entities) in zip(results, found)
             if extras["band_change"] is not None]
    if not parts:
        return None
    summary = xr.concat(parts, dim="recording", join="outer", combine_attrs="drop_conflicts",
                        coords="different", compat="equals")
    with atomic_output(out_dir / "band_change.nc") as staged:
        summary.to_netcdf(staged)
    return summary


def study_methods(table, texts, out_dir: Path) -> str:
    """The study's methods paragraph, brief (``methods.txt``, returned) and
    full (``methods_full.txt``): each realized filter once, with the
    recordings it served (``texts``: each recording's (brief, full)
    paragraphs, None if it failed)."""
    done = table[table["status"] != "failed"]
    failed = [Path(s).name for s in table.loc[table["status"] == "failed", "source"]]
    opening = (f"One filter recipe was applied to {len(done)} of the {len(table)} recordings"
               + (f"; {len(failed)} could not be filtered ({', '.join(failed)})." if failed else "."))
    paragraphs = []
    for form in (0, 1):
        by_text: dict = {}
        for source, text in zip(table["source"], texts):
            if text is not None:
                by_text.setdefault(text[form], []).append(Path(source).name)
        paragraphs.append(" ".join([opening] + [
            f"For {len(names)} recording{'s' if len(names) > 1 else ''} ({', '.join(names)}): {text}"
            for text, names in by_text.items()]))
    with atomic_output(out_dir / "methods.txt") as staged:
        staged.write_text(paragraphs[0] + "\n\n(Every stop band and edge of each filter: "
                          "methods_full.txt.)\n", encoding="utf-8")
    with atomic_output(out_dir / "methods_full.txt") as staged:
        staged.write_text(paragraphs[1] + "\n", encoding="utf-8")
    return paragraphs[0]


def filter_figure(content: dict, sources) -> tuple | None:
    """The realized filter's figure as PNG bytes and its caption, at the rate of
    the first recording whose header can be read (a Dask task); None if none can."""
    import matplotlib.pyplot as plt
    import mne

    for source in sources:
        try:
            sfreq = mne.io.read_raw(source, preload=False, verbose=False).info["sfreq"]
        except Exception:  # the recording's own task reports it
            continue
        realized = recipe_design(recipe_from_content(content), sfreq)
        figure = realized.plot(show=False)
        png = _png(figure)
        plt.close(figure)
        return png, f"{realized.describe()} (the recordings at {sfreq:g} Hz)"
    return None


def _png(figure) -> bytes:
    import io

    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=100)
    return buffer.getvalue()


def _figure_html(png: bytes, caption: str) -> str:
    import base64
    import html

    return (f'<figure><img style="max-width:100%" alt="{html.escape(caption)}" '
            f'src="data:image/png;base64,{base64.b64encode(png).decode()}">'
            f"<figcaption>{html.escape(caption)}</figcaption></figure>")


_REPORT_HEADERS = {"worker_peak_mb": "worker peak (MB)"}


_TABLE_STYLE = "<style>.gs-recordings {width: 100%} .gs-recordings td {overflow-wrap: break-word}</style>"


def _breakable(text) -> str:
    """``text`` escaped for HTML, with break opportunities after ``_ - / . \\`` so
    that long file names wrap inside the report's table (which then fits the page).

    >>> _breakable("sub-01_eeg.fif")
    'sub-<wbr>01_<wbr>eeg.<wbr>fif'
    """
    import html

    return re.sub(r"([_/\\.-])", r"\1<wbr>", html.escape(str(text)))


def write_report(table, filter_figure, out_dir: Path) -> None:
    """The study's ``report.html`` (mne.Report), written whole or not at all."""
    import html

    import matplotlib.pyplot as plt
    import mne

    from ..showing.spectrum_plots import plot_study_band_change

    report = mne.Report(title="gainshape study", verbose=False)
    if table.attrs.get("problems"):
        report.add_html("<ul>" + "".join(f"<li>{_breakable(p)}</li>" for p in
                                         table.attrs["problems"]) + "</ul>",
                        title="Parts of this report that could not be made", tags=("problems",))
    if filter_figure is not None:
        report.add_html(_figure_html(*filter_figure), title="The realized filter",
                        tags=("filter",))
    if table.attrs.get("band_change") is not None:
        figure = plot_study_band_change(table.attrs["band_change"], show=False)
        report.add_html(_figure_html(_png(figure), "Median over channels of the power change "
                                     "(dB)."), title="What changed, by recording and band",
                        tags=("band-change",))
        plt.close(figure)
    report.add_html(f"<p>{html.escape(table.attrs['methods'])}</p><p><i>Every stop band and "
                    "edge of each filter: methods_full.txt beside this report.</i></p>",
                    title="Methods", tags=("methods",))
    shown = table.assign(source=[Path(s).name for s in table["source"]])
    shown = shown.drop(columns=["output", "error", "warnings"]
                       + [e for e in ENTITIES if shown[e].isna().all()])
    text = {c: (_breakable if c == "source" else html.escape)
            for c in shown.columns if shown[c].dtype == object}
    report.add_html(_TABLE_STYLE + shown.rename(columns=_REPORT_HEADERS).to_html(
        index=False, na_rep="", float_format="{:.3g}".format, justify="left", escape=False,
        formatters={_REPORT_HEADERS.get(c, c): f for c, f in text.items()},
        classes="table table-sm table-striped gs-recordings", border=0)
        + "<p><i>The filtered files: the table's output column, and the derivatives "
        "folder beside this report.</i></p>", title="Recordings", tags=("recordings",))
    for column, title, tag in (("error", "Why recordings failed", "failures"),
                               ("warnings", "Warnings", "warnings")):
        said = [(Path(source).name, text) for source, text in zip(table["source"], table[column])
                if text]
        if said:
            report.add_html("<dl>" + "".join(
                f"<dt>{_breakable(name)}</dt><dd>{_breakable(text).replace(chr(10), '<br>')}</dd>"
                for name, text in said) + "</dl>", title=title, tags=(tag,))
    with atomic_output(out_dir / "report.html") as staged:
        report.save(staged, open_browser=False, overwrite=True, verbose=False)
