"""The site notch plan: survey, design and every printed and exported output in one call.

:func:`plan` runs :func:`notchkit.threats.survey` and :func:`notchkit.synthesis.design`
on a site, builds every printed row once (:mod:`notchkit.report.text`) and
writes the PDF, and optionally a self-contained HTML page and an output
folder with each filter's curve (PNG and CSV), its Touchstone ``.s2p`` and the
plan's JSON. Every output is planned and checked together before the long
computation (:func:`notchkit.report.files.plan_outputs`; the per-filter names
again once the filters are designed), and all are written together, all or none
(:func:`notchkit.fileio.write_all`); the site file is only read.
"""

from __future__ import annotations

import datetime as _dt
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from notchkit.errors import UsageError
from notchkit.report.summary import summary_html, summary_repr

UNITS = ("metric", "imperial", "both")
PAGE_SIZES = ("a4", "letter")
PLAN_JSON = "plan.json"
"""Name of the plan's JSON inside ``outdir``."""


@dataclass(frozen=True, slots=True, kw_only=True)
class PlanResult:
    """What :func:`plan` computed and wrote.

    ``meets`` is true only when every designed filter meets its requirements;
    the command line exits 1 otherwise (the plan is written all the same).
    """

    __repr__ = summary_repr
    _repr_html_ = summary_html

    site_name: str
    date: str
    survey: Any
    design: Any
    text: Any
    """The :class:`notchkit.report.text.PlanText` every output printed."""
    pdf: Path
    pages: int
    layout: Any
    html: Path | None = None
    outdir: Path | None = None
    files: tuple[Path, ...] = field(default_factory=tuple)
    """Files written into ``outdir`` (PNG, CSV, .s2p per filter, then the JSON)."""
    plan_json: dict[str, Any] = field(default_factory=dict, repr=False)

    @property
    def meets(self) -> bool:
        return bool(self.text.meets)

    @property
    def written(self) -> tuple[Path, ...]:
        """Every path written, the PDF first."""
        out = [self.pdf]
        if self.html is not None:
            out.append(self.html)
        return (*out, *self.files)


def _outputs(out_pdf: Any, html: Any, outdir: Any, stems: list[str] | None) -> list[tuple[Any, str]]:
    """Every file the plan writes and how messages name it; ``stems`` (the filters'
    file stems, known once the survey is done) adds the per-filter files in ``outdir``."""
    outs: list[tuple[Any, str]] = [(out_pdf, "PDF")]
    if html is not None:
        outs.append((html, "HTML"))
    if outdir is not None:
        folder = Path(outdir)
        for stem in stems or ():
            outs += [(folder / f"{stem}.png", "--outdir curve"), (folder / f"{stem}.csv", "--outdir CSV"),
                     (folder / f"{stem}.s2p", "Touchstone file")]
        outs.append((folder / PLAN_JSON, "plan JSON"))
    return outs


def _check_outputs(out_pdf: Any, html: Any, outdir: Any, site_path: str,
                   stems: list[str] | None = None) -> None:
    from notchkit.report.files import plan_outputs

    plan_outputs(_outputs(out_pdf, html, outdir, stems), inputs=[(site_path or None, "site file")],
                 dirs=[(outdir, "--outdir")] if outdir is not None else [])


def _run_design(site: Any, progress: Any = None) -> Any:
    from notchkit.synthesis import design

    return design(site, progress=progress)


def _part(d: Any, site: Any) -> tuple[Any, Any, Any]:
    """What a filter's page draws besides its text: the filter, its curve and its bands."""
    from notchkit.report.curves import curve_data
    from notchkit.report.text import design_filter

    filt = design_filter(d)
    spans = _spans(d, site)
    return filt, curve_data(filt, spans[0] + spans[1]), spans


def _stem_of(d: Any) -> str:
    """A design's file stem in ``outdir`` (``F1-wx-alert-rx``)."""
    from notchkit.synthesis import touchstone_name

    return touchstone_name(d).removesuffix(".s2p")


def _filter_files(job: tuple) -> tuple[bytes, bytes, str | None]:
    """One filter's drawing and curve PNGs and, for ``outdir``, its Touchstone text."""
    from notchkit.filters import touchstone_text
    from notchkit.report.html import filter_images

    filt, curve, spans, ft, touchstone = job
    draw_png, curve_png = filter_images(filt, curve, spans, ft)
    s2p = touchstone_text(filt, *touchstone) if touchstone is not None else None
    return draw_png, curve_png, s2p


def _designs(report: Any) -> list[Any]:
    return list(getattr(report, "designs", report))


def _spans(d: Any, site: Any) -> tuple[list[Any], list[Any]]:
    from notchkit.report.curves import notch_spans, pass_spans

    req = d.requirement
    sol = getattr(d, "solution", None)
    il = None
    passes = list(getattr(sol, "passes", ()) or ())
    if passes:
        il = passes[0].max_insertion_loss_db
    elif site is not None:
        il = site.limits.max_insertion_loss_db
    return pass_spans(req.pass_bands, il), notch_spans(req.notches)


def plan_json(site: Any, sv: Any, report: Any, *, date: str, version: str, units: str) -> dict[str, Any]:
    """The plan as JSON-ready data: the design JSON (``filters`` at the top level) plus the survey,
    written through the plan file's types (:class:`notchkit.planfile.PlanDocument`)."""
    from notchkit.planfile import PlanDocument
    from notchkit.synthesis import design_record

    designs = _designs(report)
    whole = report.to_json() if hasattr(report, "to_json") else {}
    doc = PlanDocument(site=site.name, site_file=str(site.path), date=date, notchkit_version=version,
                       units=units, meets=bool(all(getattr(d, "meets", False) for d in designs)),
                       filters=tuple(design_record(d) for d in designs), survey=sv.to_json(),
                       extra={k: v for k, v in whole.items() if k not in ("site", "meets", "filters")})
    return doc.to_json()


def plan(
    site: Any,
    out_pdf: str | os.PathLike[str],
    *,
    html: str | os.PathLike[str] | None = None,
    outdir: str | os.PathLike[str] | None = None,
    units: str = "both",
    page_size: str = "a4",
    calibration: Any = (),
    progress: Any = None,
) -> PlanResult:
    """Survey a site, design its filters and write the printed notch plan.

    Parameters
    ----------
    site : Site or path-like
        A loaded :class:`notchkit.site.Site`, or the path of a site file
        (read, never written).
    out_pdf : path-like
        The PDF to write (A4 or US Letter pages).
    html : path-like, optional
        Also write one self-contained HTML page with the same content.
    outdir : path-like, optional
        Also write, per filter, ``F1.png`` (curve), ``F1.csv`` (``freq_mhz,
        s21_db, s11_db``), ``F1.s2p`` (Touchstone), and ``plan.json`` (the
        design JSON with the survey under ``"survey"``). Created if missing.
    units : {"metric", "imperial", "both"}
        Lengths in millimetres, inches to 1/16 in, or both.
    page_size : {"a4", "letter"}
    calibration : sequence of SpoolCalibration or path, optional
        Measured cable spools: first cuts and trim targets use their VF and loss
        (:mod:`notchkit.calibration`), and the plan says so.
    progress : callable(str), optional
        Called with a short message as the work goes on (the command line shows
        it on a terminal).

    Returns
    -------
    PlanResult

    Raises
    ------
    UsageError
        Bad ``units`` or ``page_size``.
    InputError
        An output path that cannot be written (checked before any work), or
        the site file given as an output.
    SiteError
        A site file with problems.
    """
    import notchkit
    from notchkit.fileio import write_all
    from notchkit.report.pdf import page_size_in, render_pdf
    from notchkit.report.text import plan_text

    if units not in UNITS:
        raise UsageError(f"units {units!r} must be one of {', '.join(UNITS)}")
    page_size_in(page_size)
    say = progress or (lambda _m: None)
    site, site_path = _loaded(site, out_pdf, html, outdir, calibration)
    date = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d")
    version = notchkit.__version__
    json_path = Path(outdir) / PLAN_JSON if outdir is not None else None
    json_name = str(json_path) if json_path is not None else "OUTDIR/plan.json"
    footer = f"{site.name} - notch plan {date} - notchkit {version}"
    report = _run_design(site, progress=progress)  # finished designs: the PDF is drawn from them below
    sv = _survey_of(report, site)
    designs = _designs(report)
    stems = [_stem_of(d) for d in designs]
    _check_outputs(out_pdf, html, outdir, site_path, stems)
    say("writing the PDF")
    pt = plan_text(site=site, sv=sv, designs=designs, date=date, version=version, units=units,
                   plan_json=json_name)
    parts = [_part(d, site) for d in designs]
    pdf_bytes, layout = render_pdf(pt, parts, page_size=page_size, footer=footer)
    made: list[tuple[bytes, bytes, str | None]] = []
    if html is not None or outdir is not None:
        say("drawing the images")
        made = _images(site, designs, pt, parts, outdir=outdir, version=version)
    doc = plan_json(site, sv, report, date=date, version=version, units=units)
    # Everything is in memory now: write it all, or nothing (notchkit.fileio.write_all).
    writes = _writes(out_pdf, pdf_bytes, html=html, pt=pt, made=made, footer=footer)
    n_before = len(writes)
    if outdir is not None:
        writes += _outdir_writes(Path(outdir), stems, parts, made, json_path, doc)
    written = write_all(writes, make_dir=outdir)
    pdf_path = written[0]
    html_path = written[1] if html is not None else None
    files = written[n_before:]

    return PlanResult(site_name=site.name, date=date, survey=sv, design=report, text=pt, pdf=pdf_path,
                      pages=layout.total, layout=layout, html=html_path,
                      outdir=Path(outdir) if outdir is not None else None, files=tuple(files),
                      plan_json=doc)


def _loaded(site: Any, out_pdf: Any, html: Any, outdir: Any, calibration: Any) -> tuple[Any, str]:
    """The site (loaded if a path, with the calibration applied) and its file's path; the
    outputs are checked before the site file is read."""
    if isinstance(site, str | os.PathLike):
        site_path = str(site)
        _check_outputs(out_pdf, html, outdir, site_path)
        from notchkit.site import load_site

        site = load_site(site_path)
    else:
        site_path = str(getattr(site, "path", "") or "")
        _check_outputs(out_pdf, html, outdir, site_path)

    if calibration:
        from notchkit.calibration import apply

        site = apply(site, calibration)
    return site, site_path


def _survey_of(report: Any, site: Any) -> Any:
    """The design report's survey (surveyed here if the report carries none)."""
    sv = getattr(report, "survey", None)
    if sv is None:
        from notchkit.threats import survey

        sv = survey(site)
    return sv


def _images(site: Any, designs: list[Any], pt: Any, parts: list[Any], *, outdir: Any,
            version: str) -> list[tuple[bytes, bytes, str | None]]:
    """Each filter's drawing and curve PNGs and, for ``outdir``, its Touchstone text."""
    from notchkit.report.text import design_id
    from notchkit.synthesis import touchstone_sweep_hz

    jobs = []
    for d, ft, (filt, curve, spans) in zip(designs, pt.filters, parts, strict=True):
        touchstone = None
        if outdir is not None:
            z_system = getattr(getattr(d, "solution", None), "z_system", 50.0)
            touchstone = (touchstone_sweep_hz(d.requirement), z_system,
                          f"notchkit plan {design_id(d)}: {site.name}, notchkit {version}",
                          _stem_of(d))
        jobs.append((filt, curve, spans, ft, touchstone))
    # In this process: worker processes gave no wall-time gain (benchmarks/plan.py).
    return [_filter_files(job) for job in jobs]


def _writes(out_pdf: Any, pdf_bytes: bytes, *, html: Any, pt: Any,
            made: list[tuple[bytes, bytes, str | None]], footer: str) -> list[tuple[Any, bytes, str]]:
    """The PDF and, if asked for, the HTML page: (path, bytes, what) for ``write_all``."""
    writes: list[tuple[Any, bytes, str]] = [(out_pdf, pdf_bytes, "PDF")]
    if html is not None:
        from notchkit.report.html import render_html

        pngs = [(draw_png, curve_png) for draw_png, curve_png, _s2p in made]
        writes.append((html, render_html(pt, pngs, footer=footer).encode("utf-8"), "HTML"))
    return writes


def _outdir_writes(folder: Path, stems: list[str], parts: list[Any],
                   made: list[tuple[bytes, bytes, str | None]], json_path: Any,
                   doc: dict[str, Any]) -> list[tuple[Any, bytes, str]]:
    """Each filter's curve (PNG, CSV) and Touchstone file in ``folder``, then the plan JSON."""
    from notchkit.jsonvalues import dumps
    from notchkit.report.curves import curve_csv_text

    writes: list[tuple[Any, bytes, str]] = []
    for stem, (_filt, curve, _sp), (_draw, curve_png, s2p) in zip(stems, parts, made, strict=True):
        writes += [(folder / f"{stem}.png", curve_png, "--outdir curve"),
                   (folder / f"{stem}.csv", curve_csv_text(curve).encode("utf-8"), "--outdir CSV"),
                   (folder / f"{stem}.s2p", (s2p or "").encode("utf-8"), "Touchstone file")]
    writes.append((json_path, (dumps(doc, indent=2) + "\n").encode("utf-8"), "plan JSON"))
    return writes
