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

Files already in the folder that the report does not write are left alone.
"""

from __future__ import annotations

import base64
import datetime as _dt
import os
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import pandas as pd

from globcons._version import __version__
from globcons.analysis.columns import score_columns
from globcons.analysis.contrast import assign_groups, contrast_columns, top_contrast
from globcons.analysis.options import ScoreOptions
from globcons.analysis.rate_columns import add_rate_columns
from globcons.core.alignment import Alignment
from globcons.core.labels import HELICES, segment_of
from globcons.core.vocabulary import CAUTION, CONTRAST_CLASSES
from globcons.errors import OutputError
from globcons.io.alignments import read_alignment
from globcons.io.atomic import atomic_output
from globcons.io.tables import text_cell, write_table
from globcons.plots.conservation import draw_profile
from globcons.plots.contrast import draw_contrast
from globcons.plots.logo import draw_logo
from globcons.plots.output import save_figure
from globcons.report.methods import (
    CONTRAST_CITATIONS,
    PERMUTATION_CITATION,
    citations,
    contrast_methods_text,
    methods_text,
)

__all__ = ["ReportResult", "write_report"]

_NUMERIC = {"column", "ref_position", "support", "conservation", "property_conservation", "entropy_bits",
            "entropy_norm", "property_entropy", "jsd", "gap_fraction",
            "unknown_fraction", "n_eff", "rate", "rate_low", "rate_high"}


@dataclass(frozen=True)
class ReportResult:
    """What :func:`write_report` wrote: the folder, the files, the column table."""

    folder: Path
    files: tuple[str, ...]
    table: pd.DataFrame

    @property
    def html(self) -> Path:
        return self.folder / "report.html"


def _data_uri(path: Path, mime: str) -> str:
    return f"data:{mime};base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def _options_list(table: pd.DataFrame, alignment: Alignment) -> list[tuple[str, str]]:
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
    shown = ["column", "frame_label", "sites", "class", "contrast", "mi", "pvalue"]
    shown += ["pvalue_permutation"] if "pvalue_permutation" in best else []
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


def _write_tables(table: pd.DataFrame, folder: Path, inputs: list) -> list[str]:
    meta = table.attrs
    files = write_table(table, folder / "columns.tsv", "tsv", metadata=meta, inputs=inputs)
    for ext in ("md", "tex"):
        files += write_table(table, folder / f"columns.{ext}", ext, metadata=meta, inputs=inputs,
                             caption=f"Column conservation of {Path(meta['input']).name}")
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


def _write_helix_logos(aligned: Alignment, table: pd.DataFrame, folder: Path, inputs: list,
                       files: list[str]) -> list[tuple[str, str]]:
    """Write logo_<helix>.svg for every helix the columns carry; return (helix, data URI) pairs."""
    meta, labels = table.attrs, table["frame_label"].tolist()
    uris = []
    for helix in HELICES:
        columns = [int(c) for c, label in zip(table["column"], labels, strict=True)
                   if label and segment_of(label) == helix]
        if not columns:
            continue
        path = folder / f"logo_{helix}.svg"
        figure = draw_logo(aligned, columns, weights=meta["weights"], labels=[labels[c - 1] for c in columns],
                           max_gaps=meta["rules"]["max_gaps"], title=f"helix {helix}",
                           identity=meta["identity"] or 0.8)
        save_figure(figure, path, inputs)
        files.append(str(path))
        uris.append((helix, _data_uri(path, "image/svg+xml")))
    return uris


def _render_html(table: pd.DataFrame, aligned: Alignment, profile_uri: str, logo_uris: list[tuple[str, str]],
                 methods: str, references: list[str], contrast_section: dict | None, rates_uri: str = "") -> str:
    from jinja2 import Environment  # only the report needs templates

    meta = table.attrs
    rows = [[(name, text_cell(value)) for name, value in zip(table.columns, record, strict=True)]
            for record in table.itertuples(index=False, name=None)]
    frame = meta.get("frame") or {}
    notes = [frame.get("note", "")] if frame.get("source") == "none" else []
    environment = Environment(autoescape=True, keep_trailing_newline=True)
    template_text = (resources.files("globcons") / "data" / "templates" / "report.html.j2").read_text(encoding="utf-8")
    return environment.from_string(template_text).render(
        input_name=Path(meta["input"]).name, version=__version__,
        generated=_dt.date.today().isoformat(), caution=CAUTION,
        options=_options_list(table, aligned), sequences=meta["sequences"], effective=meta["effective_sequences"],
        columns=meta["columns"], class_counts=list(meta["class_counts"].items()),
        frame_note=frame.get("note", ""), profile_uri=profile_uri, logos=logo_uris,
        sites=table[table["sites"] != ""].to_dict("records"),
        low_data=meta["low_data_columns"], min_neff=f"{meta['rules']['min_neff']:g}", notes=notes,
        table_columns=list(table.columns), numeric=_NUMERIC, table_rows=rows, methods=methods,
        citations=references, contrast=contrast_section, rates_uri=rates_uri,
        rates_summary=(meta.get("rates") or {}).get("summary", ""),
    )


def write_report(alignment: str | os.PathLike | Alignment, out_dir: str | os.PathLike,
                 options: ScoreOptions | None = None, fmt: str | None = None, keep_inserts: bool = False,
                 logos: bool = True, contrast: dict | None = None, rates: dict | None = None) -> ReportResult:
    """Write the report of an alignment into ``out_dir`` (created if missing).

    Parameters
    ----------
    alignment
        A path (read with :func:`globcons.io.read_alignment`) or an Alignment.
    out_dir
        The folder; files in it that the report does not write are left alone.
    options
        Scoring options (defaults of :class:`~globcons.analysis.options.ScoreOptions`).
    logos
        Draw a logo of each helix (the slowest part).
    contrast
        Add the group contrast: keyword arguments ``groups_file`` or ``group_by`` (see
        :func:`globcons.analysis.contrast.assign_groups`) and optionally ``min_group_neff``, ``permutations``,
        ``seed``, ``conserved_min``, ``top`` (positions shown, default 12).
    rates
        Add the per-column rates: keyword arguments of
        :func:`globcons.analysis.rate_columns.add_rate_columns` (``options``, ``tree_path``); ``{}`` for
        the defaults.
    """
    folder = Path(out_dir)
    if folder.exists() and not folder.is_dir():
        raise OutputError("exists and is not a folder", source=str(folder))
    inputs = [] if isinstance(alignment, Alignment) else [alignment]
    aligned = alignment if isinstance(alignment, Alignment) else read_alignment(alignment, format=fmt,
                                                                                 keep_inserts=keep_inserts)
    options = options or ScoreOptions()
    table = score_columns(aligned, options)
    if rates is not None:
        table, _ = add_rate_columns(table, aligned, **rates)
        inputs = inputs + [rates.get("tree_path")] if rates.get("tree_path") else inputs
    folder.mkdir(parents=True, exist_ok=True)
    files = _write_tables(table, folder, inputs)
    profile_uri = _write_profile(table, folder, inputs, files)
    rates_uri = ""
    if rates is not None:
        _write_tree(table.attrs["rates"]["tree_newick"], folder, inputs, files)
        rates_uri = _write_profile(table, folder, inputs, files, score="rates", name="rates_profile")
    logo_uris = _write_helix_logos(aligned, table, folder, inputs, files) if logos else []
    contrast_section = None
    methods, references = methods_text(table), citations(table.attrs)
    if contrast:
        contrast_section = _contrast_section(aligned, folder, options, dict(contrast), inputs, files)
        methods += " " + contrast_section["methods"]
        references += CONTRAST_CITATIONS + (PERMUTATION_CITATION if contrast_section["permutations"] else [])
    with atomic_output(folder / "methods.md", inputs) as stream:
        stream.write("## Methods\n\n" + methods + "\n\n### References\n\n"
                     + "\n".join(f"- {c}" for c in references) + "\n")
    files.append(str(folder / "methods.md"))
    html = _render_html(table, aligned, profile_uri, logo_uris, methods, references, contrast_section, rates_uri)
    with atomic_output(folder / "report.html", inputs) as stream:
        stream.write(html)
    files.insert(0, str(folder / "report.html"))
    return ReportResult(folder, tuple(files), table)
