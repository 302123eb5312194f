"""The offline report: one self-contained HTML file plus the tables, figures and methods text beside it.

``write_report`` scores an alignment (:func:`globcons.analysis.columns.score_columns`), draws the profile
and the logos of each helix, and writes into a folder:

- ``report.html``: inline CSS, figures as ``data:`` URIs, a sortable column table (a few lines of inline
  script), no network requests and no external files; rendered from a jinja2 template shipped as package
  data, with autoescaping on (sequence ids and annotations are user input);
- ``columns.tsv`` (+ ``columns.tsv.meta.json``), ``columns.md``, ``columns.tex`` (booktabs);
- ``profile.svg``, ``profile.png`` and ``logo_<helix>.svg``;
- with ``rates=``, the rate columns in the tables (:mod:`globcons.analysis.rate_columns`), ``tree.nwk``
  (the tree they used) and ``rates_profile.svg``/``.png``, also shown in the HTML;
- ``methods.md``: the methods paragraph, generated from the options actually used, with its citations
  (:mod:`globcons.report.methods`);
- with a grouping (``contrast=``), ``contrast.tsv`` (+ meta) and ``contrast.svg``/``contrast.png``: the
  group contrast of :mod:`globcons.analysis.contrast`, also shown as a section of the HTML.

The folder is replaced as a whole (:func:`~globcons.io.atomic.atomic_folder`): everything is written into a
temporary sibling folder that takes the place of the old one only when the whole report is written, so
no stale file of an earlier run survives and a failed run leaves the old folder as it was. An existing
folder is replaced only when it is empty or an earlier report (it holds ``report.html``).
"""

from __future__ import annotations

import base64
import datetime as _dt
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import pandas as pd

from globcons._version import __version__
from globcons.analysis.columns import score_columns
from globcons.analysis.contrast import assign_groups, contrast_columns, top_contrast
from globcons.analysis.options import ScoreOptions
from globcons.analysis.paper import keep_rows, paper_table, write_column_table
from globcons.analysis.rate_columns import add_rate_columns
from globcons.core.alignment import Alignment
from globcons.core.labels import HELICES, segment_of
from globcons.core.vocabulary import CAUTION, CONTRAST_CLASSES
from globcons.io.alignments import read_alignment
from globcons.io.atomic import atomic_folder, atomic_output, check_folder_output
from globcons.io.tables import text_cell, write_table
from globcons.plots.conservation import draw_profile
from globcons.plots.contrast import draw_contrast
from globcons.plots.logo import draw_logo
from globcons.plots.output import save_figure
from globcons.report.methods import (
    CONTRAST_CITATIONS,
    PERMUTATION_CITATION,
    STRUCTURE_CITATIONS,
    citations,
    contrast_methods_text,
    methods_text,
    reference_list,
    structure_methods_text,
)
from globcons.structure.context import add_structure_columns

__all__ = ["ReportResult", "write_report"]

#: CSS pixels per inch (CSS fixes 96), for the displayed size of the figures.
CSS_PX_PER_INCH = 96

_NUMERIC = {"column", "ref_position", "support", "conservation", "property_conservation", "entropy_bits",
            "entropy_norm", "property_entropy", "jsd", "gap_fraction",
            "unknown_fraction", "n_eff", "rsa", "iron_distance", "rate", "rate_low", "rate_high"}


@dataclass(frozen=True)
class ReportResult:
    """What :func:`write_report` wrote: the folder, the files, the column table."""

    folder: Path
    files: tuple[str, ...]
    table: pd.DataFrame
    structure_note: str = ""

    @property
    def html(self) -> Path:
        return self.folder / "report.html"


def _data_uri(path: Path, mime: str) -> str:
    return f"data:{mime};base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def _options_list(table: pd.DataFrame) -> list[tuple[str, str]]:
    meta = table.attrs
    rules = meta["rules"]
    frame = meta.get("frame") or {}
    return [
        ("input", f"{meta['input']} ({meta['format']})"),
        ("frequency weights", meta["weights"]),
        ("effective sequences", f"{meta['effective_sequences']:.1f}: {meta['effective_sequences_method']}"),
        ("gap-rich above", f"{rules['max_gaps']:g}"),
        ("invariant", f"one residue holds {rules['invariant_min']:g} with probability {rules['confidence']:g}"),
        ("conservative", f"one group holds {rules['group_min']:g} with probability {rules['confidence']:g}; "
                         + meta["grouping"]),
        ("prior", f"Dirichlet, weight {rules['prior_weight']:g}, BLOSUM62 background"),
        ("low-data below", f"{rules['min_neff']:g} effective sequences"),
        ("JSD window", str(meta["window"])),
        ("frame", frame.get("note") or "not tied"),
    ] + ([("evolutionary rates", meta["rates"]["summary"])] if meta.get("rates") else [])


def _contrast_section(aligned: Alignment, folder: Path, options: ScoreOptions, settings: dict, inputs: list,
                      files: list[str]) -> dict:
    """Compute the group contrast, write contrast.tsv and its figure; what the template's section shows."""
    top = int(settings.pop("top", 12))
    groups = assign_groups(aligned, groups_file=settings.pop("groups_file", None),
                           group_by=settings.pop("group_by", None))
    table = contrast_columns(aligned, groups, weights=options.weights, identity=options.identity, rules=options.rules,
                             reference=options.reference, frame=options.frame, **settings)
    meta = table.attrs
    files += write_table(table, folder / "contrast.tsv", "tsv", metadata=meta, inputs=inputs)
    figure = draw_contrast(table, aligned, groups, top=top)
    for ext in ("svg", "png"):
        save_figure(figure, folder / f"contrast.{ext}", inputs)
        files.append(str(folder / f"contrast.{ext}"))
    best = top_contrast(table, top)
    shown = ["column", "frame_label", "sites", "class", "contrast", "mi", "pvalue", "qvalue"]
    shown += ["pvalue_permutation", "qvalue_permutation"] if "pvalue_permutation" in best else []
    shown += [c for c in best.columns if c.startswith("consensus_")]
    methods = contrast_methods_text(meta)
    return {
        "methods": methods,
        "figure_uri": _data_uri(folder / "contrast.svg", "image/svg+xml"),
        "groups": [(g, v["rows"], f"{v['effective_size']:.1f}") for g, v in meta["groups"].items()],
        "left_out": [(g, v["rows"], f"{v['effective_size']:.1f}") for g, v in meta["left_out_groups"].items()],
        "min_group_neff": f"{meta['min_group_neff']:g}",
        "ungrouped": meta["ungrouped_rows"],
        "class_counts": [(c, meta["class_counts"][c]) for c in CONTRAST_CLASSES],
        "columns": shown,
        "rows": [[(name, text_cell(value)) for name, value in zip(shown, record, strict=True)]
                 for record in best[shown].itertuples(index=False, name=None)],
        "conserved_min": f"{meta['conserved_min']:g}",
        "max_gaps": f"{meta['max_gaps']:g}",
        "permutations": meta["permutations"],
    }


def _write_tables(table: pd.DataFrame, folder: Path, inputs: list, tex_columns: list[str] | None) -> list[str]:
    """columns.tsv (+ meta), .md and .tex (the page-wide paper table) of the rows the report shows."""
    files = []
    for ext in ("tsv", "md", "tex"):
        caption = None if ext == "tsv" else f"Column conservation of {Path(table.attrs['input']).name}"
        files += write_column_table(table, folder / f"columns.{ext}", ext, inputs=inputs, caption=caption,
                                    tex_columns=tex_columns)
    return files


def _write_profile(table: pd.DataFrame, folder: Path, inputs: list, files: list[str], score: str = "conservation",
                   name: str = "profile") -> str:
    """Write <name>.svg and .png of a score's profile; return the SVG as a data URI."""
    figure = draw_profile(table, score=score)
    for ext in ("svg", "png"):
        save_figure(figure, folder / f"{name}.{ext}", inputs)
        files.append(str(folder / f"{name}.{ext}"))
    return _data_uri(folder / f"{name}.svg", "image/svg+xml")


def _write_tree(newick: str, folder: Path, inputs: list, files: list[str]) -> None:
    with atomic_output(folder / "tree.nwk", inputs) as stream:
        stream.write(newick + "\n")
    files.append(str(folder / "tree.nwk"))


def _helices_of(table: pd.DataFrame) -> list[str]:
    """The helices the table's frame labels touch, in order."""
    segments = {segment_of(label) for label in table["frame_label"] if label}
    return [helix for helix in HELICES if helix in segments]


class _Steps:
    """Counts the report's steps and tells ``progress(step, done, total)`` after each one."""

    def __init__(self, progress: Callable[[str, int, int], None] | None, total: int) -> None:
        self.progress, self.total, self.done = progress, total, 0

    def __call__(self, what: str) -> None:
        self.done += 1
        if self.progress is not None:
            self.progress(what, self.done, self.total)


def _write_helix_logos(aligned: Alignment, table: pd.DataFrame, folder: Path, inputs: list,
                       files: list[str], step: Callable[[str], None]) -> list[tuple[str, str, tuple[int, int]]]:
    """Write logo_<helix>.svg for every helix the columns carry; return (helix, data URI, (width, height) in CSS
    pixels). Every logo is drawn to one y-scale (:data:`globcons.plots.logo.LOGO_GEOMETRY`) and the page shows
    each at that size, unscaled, so their heights in bits compare across helices."""
    meta, labels = table.attrs, table["frame_label"].tolist()
    uris = []
    for helix in _helices_of(table):
        columns = [int(c) for c, label in zip(table["column"], labels, strict=True)
                   if label and segment_of(label) == helix]
        path = folder / f"logo_{helix}.svg"
        figure = draw_logo(aligned, columns, weights=meta["weights"], labels=[labels[c - 1] for c in columns],
                           max_gaps=meta["rules"]["max_gaps"], title=f"helix {helix}",
                           identity=meta["identity"] or 0.8)
        save_figure(figure, path, inputs)
        files.append(str(path))
        size = (round(figure.get_figwidth() * CSS_PX_PER_INCH), round(figure.get_figheight() * CSS_PX_PER_INCH))
        uris.append((helix, _data_uri(path, "image/svg+xml"), size))
        step(f"drew the logo of helix {helix}")
    return uris


def _render_html(table: pd.DataFrame, shown: pd.DataFrame, profile_uri: str, logo_uris: list[tuple],
                 methods: str, references: list[str], contrast_section: dict | None,
                 rates_uri: str = "", logos_asked: bool = True) -> str:
    """The page: summary, figures and sites of the whole ``table``; its column table shows the ``shown`` rows."""
    from jinja2 import Environment  # only the report needs templates

    meta = table.attrs
    rows = [[(name, text_cell(value)) for name, value in zip(shown.columns, record, strict=True)]
            for record in shown.itertuples(index=False, name=None)]
    kept = shown.attrs.get("kept_rows") if shown is not table else None
    frame = meta.get("frame") or {}
    notes = [frame.get("note", "")] if frame.get("source") == "none" else []
    environment = Environment(autoescape=True, keep_trailing_newline=True)
    template_text = (resources.files("globcons") / "data" / "templates" / "report.html.j2").read_text(encoding="utf-8")
    return environment.from_string(template_text).render(
        input_name=Path(meta["input"]).name, version=__version__,
        generated=_dt.date.today().isoformat(), caution=CAUTION,
        options=_options_list(table), sequences=meta["sequences"], effective=meta["effective_sequences"],
        columns=meta["columns"], class_counts=list(meta["class_counts"].items()),
        frame_note=frame.get("note", ""), profile_uri=profile_uri, logos=logo_uris,
        sites=table[table["sites"] != ""].to_dict("records"),
        low_data=meta["low_data_columns"], min_neff=f"{meta['rules']['min_neff']:g}", notes=notes,
        table_columns=list(shown.columns), numeric=_NUMERIC, table_rows=rows, methods=methods,
        citations=references, contrast=contrast_section, kept=kept,
        rates_uri=rates_uri, rates_summary=(meta.get("rates") or {}).get("summary", ""), logos_asked=logos_asked,
    )


def write_report(alignment: str | os.PathLike | Alignment, out_dir: str | os.PathLike,
                 options: ScoreOptions | None = None, fmt: str | None = None, keep_inserts: bool = False,
                 logos: bool = True, contrast: dict | None = None, structure: str | os.PathLike | None = None,
                 chain: str | None = None, max_columns: int | None = None, only_classes: Sequence[str] = (),
                 only_labels: Sequence[str] = (), tex_columns: Sequence[str] | None = None,
                 progress: Callable[[str, int, int], None] | None = None,
                 rates: dict | None = None) -> ReportResult:
    """Write the report of an alignment into the folder ``out_dir``, replaced as a whole.

    Parameters
    ----------
    alignment
        A path (read with :func:`globcons.io.read_alignment`) or an Alignment.
    out_dir
        The folder: new, empty, or an earlier report (see :func:`~globcons.io.atomic.atomic_folder`).
    options
        Scoring options (defaults of :class:`~globcons.analysis.options.ScoreOptions`).
    logos
        Draw a logo of each helix (the slowest part).
    contrast
        Add the group contrast: keyword arguments ``groups_file`` or ``group_by`` (see
        :func:`globcons.analysis.contrast.assign_groups`) and optionally ``min_group_neff``, ``permutations``,
        ``seed``, ``conserved_min``, ``top`` (positions shown, default 12).
    structure, chain
        A PDB or mmCIF file and its chain (default: the first protein chain): the column table gains the
        structural columns of :func:`globcons.structure.context.add_structure_columns`, and the methods
        text says how they were measured.
    max_columns
        Refuse an alignment of more columns (None: no limit).
    only_classes, only_labels
        Keep only these classes / frame labels in the column tables (files and page); the summary, the
        figures and the methods text still cover every column (:func:`globcons.analysis.paper.keep_rows`).
    tex_columns
        Columns of ``columns.tex`` (default :data:`globcons.analysis.paper.TEX_COLUMNS`; ``["all"]``).
    progress
        Called as ``progress(step, done, total)`` after each step (scoring, tables, each figure, the page),
        for a progress display; the library itself prints nothing.
    rates
        Add the per-column rates: keyword arguments of
        :func:`globcons.analysis.rate_columns.add_rate_columns` (``options``, ``tree_path``); ``{}`` for
        the defaults.
    """
    folder = Path(out_dir)
    options = options or ScoreOptions()
    inputs = [] if isinstance(alignment, Alignment) else [alignment]
    check_folder_output(folder, [*inputs, options.sites_path, (contrast or {}).get("groups_file"), structure,
                                 (rates or {}).get("tree_path")])
    aligned = alignment if isinstance(alignment, Alignment) else read_alignment(
        alignment, format=fmt, keep_inserts=keep_inserts, max_columns=max_columns)
    table = score_columns(aligned, options)
    structure_note = ""
    if structure is not None:
        table, structure_note = add_structure_columns(aligned, table, structure, chain)
        inputs.append(structure)
    if rates is not None:
        table, _ = add_rate_columns(table, aligned, **rates)
        if rates.get("tree_path"):
            inputs.append(rates["tree_path"])
    shown = keep_rows(table, only_classes, only_labels)
    tex = list(tex_columns) if tex_columns else None
    paper_table(shown, tex)  # a bad --tex-columns fails before any file
    helices = _helices_of(table) if logos else []
    step = _Steps(progress, 4 + len(helices) + (1 if contrast else 0) + (1 if rates is not None else 0))
    step("scored the columns")
    with atomic_folder(folder, [*inputs, options.sites_path, (contrast or {}).get("groups_file")]) as work:
        files = _write_report_files(aligned, table, shown, work, options, inputs, logos, contrast, tex, step)
    files = [str(folder / Path(f).relative_to(work)) for f in files]
    step("wrote the page")
    return ReportResult(folder, tuple(files), table, structure_note)


def _write_report_files(aligned: Alignment, table: pd.DataFrame, shown: pd.DataFrame, folder: Path,
                        options: ScoreOptions, inputs: list, logos: bool, contrast: dict | None,
                        tex_columns: list[str] | None, step: Callable[[str], None]) -> list[str]:
    """Every file of the report, written into ``folder``; the paths written, report.html first."""
    files = _write_tables(shown, folder, inputs, tex_columns)
    step("wrote the tables")
    profile_uri = _write_profile(table, folder, inputs, files)
    step("drew the profile")
    rates_uri = ""
    if "rates" in table.attrs:
        _write_tree(table.attrs["rates"]["tree_newick"], folder, inputs, files)
        rates_uri = _write_profile(table, folder, inputs, files, score="rates", name="rates_profile")
        step("drew the rates")
    logo_uris = _write_helix_logos(aligned, table, folder, inputs, files, step) if logos else []
    contrast_section = None
    methods, references = methods_text(table), citations(table.attrs)
    if "structure" in table.attrs:
        methods += " " + structure_methods_text(table.attrs["structure"])
        references += STRUCTURE_CITATIONS
    if contrast:
        contrast_section = _contrast_section(aligned, folder, options, dict(contrast), inputs, files)
        step("computed the group contrast")
        methods += " " + contrast_section["methods"]
        references += CONTRAST_CITATIONS + (PERMUTATION_CITATION if contrast_section["permutations"] else [])
    references = reference_list(references)
    with atomic_output(folder / "methods.md", inputs) as stream:
        stream.write("## Methods\n\n" + methods + "\n\n### References\n\n"
                     + "\n".join(f"- {c}" for c in references) + "\n")
    files.append(str(folder / "methods.md"))
    html = _render_html(table, shown, profile_uri, logo_uris, methods, references, contrast_section, rates_uri,
                        logos_asked=logos)
    with atomic_output(folder / "report.html", inputs) as stream:
        stream.write(html)
    files.insert(0, str(folder / "report.html"))
    return files
