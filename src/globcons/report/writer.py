"""The offline report: one self-contained HTML file plus the tables, figures and methods text beside it.

``write_report`` scores an alignment (:func:`globcons.analysis.columns.score_columns`), draws the profile and the
logos of each helix, and writes into a folder:

- ``report.html``: inline CSS, figures as ``data:`` URIs, a sortable column table (a few lines of inline
  script), no network requests and no external files; rendered from a jinja2 template shipped as package
  data, with autoescaping on (sequence ids and annotations are user input);
- ``columns.tsv`` (+ ``columns.tsv.meta.json``), ``columns.md``, ``columns.tex`` (booktabs);
- ``profile.svg``, ``profile.png`` and ``logo_<helix>.svg``;
- ``methods.md``: the methods paragraph, generated from the options actually used, with its citations;
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
from globcons.core.alignment import Alignment
from globcons.analysis.columns import ScoreOptions, score_columns
from globcons.errors import OutputError
from globcons.frame.reference import HELICES, segment_of
from globcons.io.readers import read_alignment
from globcons.io.tables import _text_cell, atomic_output, write_table

__all__ = ["ReportResult", "write_report", "methods_text", "CAUTION_TEXT"]

CAUTION_TEXT = ("Family-conservation analysis for research. It is not a clinical interpretation: variant "
                "classification follows the laboratory's accredited procedures and current professional "
                "guidelines, and engineered proteins need experimental validation and the local biosafety rules.")

_NUMERIC = {"column", "ref_position", "entropy_bits", "entropy_norm", "property_entropy", "jsd", "gap_fraction",
            "unknown_fraction", "n_eff"}


@dataclass(frozen=True)
class ReportResult:
    """What :func:`write_report` wrote: the folder, the files, the column table."""

    folder: Path
    files: tuple[str, ...]
    table: pd.DataFrame

    @property
    def html(self) -> Path:
        return self.folder / "report.html"


def _citations(meta: dict) -> list[str]:
    cited = ["Shannon CE (1948) A mathematical theory of communication. Bell Syst Tech J 27:379-423.",
             "Capra JA, Singh M (2007) Predicting functionally important residues from sequence conservation. "
             "Bioinformatics 23:1875-1882.",
             "Mirny LA, Shakhnovich EI (1999) Universally conserved positions in protein folds. J Mol Biol "
             "291:177-196.",
             "Henikoff S, Henikoff JG (1992) Amino acid substitution matrices from protein blocks. PNAS "
             "89:10915-10919.",
             "Schneider TD, Stormo GD, Gold L, Ehrenfeucht A (1986) Information content of binding sites on "
             "nucleotide sequences. J Mol Biol 188:415-431."]
    if meta["weights"] == "henikoff":
        cited.append("Henikoff S, Henikoff JG (1994) Position-based sequence weights. J Mol Biol 243:574-578.")
    if meta["weights"] == "cluster":
        cited.append("Morcos F et al. (2011) Direct-coupling analysis of residue coevolution captures native "
                     "contacts across many protein families. PNAS 108:E1293-E1301.")
    if meta.get("frame", {}).get("source") == "anchor":
        cited += ["Gribskov M, McLachlan AD, Eisenberg D (1987) Profile analysis: detection of distantly related "
                  "proteins. PNAS 84:4355-4358.",
                  "Gotoh O (1982) An improved algorithm for matching biological sequences. J Mol Biol 162:705-708.",
                  "Karlin S, Altschul SF (1990) Methods for assessing the statistical significance of molecular "
                  "sequence features by using general scoring schemes. PNAS 87:2264-2268."]
    return cited


def methods_text(table: pd.DataFrame) -> str:
    """The methods paragraph for a column table, from the options recorded in its metadata."""
    meta = table.attrs
    rules = meta["rules"]
    weighting = {
        "henikoff": "position-based sequence weights (Henikoff and Henikoff 1994), scaled to sum to the number "
                    "of distinct sequences",
        "cluster": f"weights of one over the number of sequences within {meta['identity'] or 0.8:.0%} identity "
                   "(Morcos et al. 2011)",
        "none": "no sequence weighting",
    }[meta["weights"]]
    grouping = (f"the reduced alphabet {rules['residue_groups']}" if rules["residue_groups"]
                else f"{rules['matrix']} (every pair of residues scoring above zero; Henikoff and Henikoff 1992)")
    frame = meta.get("frame") or {}
    frame_sentence = {
        "file": "Columns carried globin helix labels assigned by placement on the globcons reference frame.",
        "sidecar": "Columns carried globin helix labels assigned by placement on the globcons reference frame.",
        "anchor": (f"Columns were tied to the globin helix frame through the sequence {frame.get('anchor')}, placed "
                   "on a profile of four reference globins (Gribskov et al. 1987) by affine-gap alignment (Gotoh "
                   "1982) with helix-dependent gap costs; its significance came from shuffled copies (Karlin and "
                   f"Altschul 1990; E-value {frame.get('evalue') if frame.get('evalue') is not None else float('nan'):.1e})."),
    }.get(frame.get("source"), "Columns were not tied to the globin helix frame.")
    text = (
        f"Conservation of the {meta['sequences']} sequences and {meta['columns']} columns of {Path(meta['input']).name} "
        f"was computed with globcons {meta['version']}, using {weighting} "
        f"({meta['effective_sequences']:.1f} effective sequences). For each column, the weighted Shannon entropy "
        "over the 20 standard residues (Shannon 1948; gaps and unknown residues excluded), the entropy over six "
        "property classes (Mirny and Shakhnovich 1999) and the Jensen-Shannon divergence from the BLOSUM62 "
        "background distribution, multiplied by the fraction of non-gap weight (Capra and Singh 2007"
        + (f", smoothed over {meta['window']} neighbouring columns on each side" if meta["window"] else "")
        + "), were computed. "
        f"Columns with a weighted gap fraction above {rules['max_gaps']:g} were classed gap-rich; columns in which "
        f"one residue carried at least {rules['invariant_min']:g} of the residue weight, invariant; columns whose "
        f"most frequent residues carrying {rules['group_min']:g} of the weight formed one substitution group under "
        f"{grouping}, conservative; and the rest, variable. Columns with fewer than {rules['min_neff']:g} "
        "effective sequences were flagged as low-data. "
        + frame_sentence
        + " Sequence logos show information in bits with the small-sample correction of Schneider et al. (1986)."
    )
    return text


def _data_uri(path: Path, mime: str) -> str:
    return f"data:{mime};base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def _options_list(table: pd.DataFrame, alignment: Alignment) -> list[tuple[str, str]]:
    meta = table.attrs
    rules = meta["rules"]
    frame = meta.get("frame") or {}
    return [
        ("input", f"{meta['input']} ({meta['format']})"),
        ("weights", meta["weights"] + (f" (identity {meta['identity']})" if meta["identity"] else "")),
        ("gap-rich above", f"{rules['max_gaps']:g}"),
        ("invariant from", f"{rules['invariant_min']:g}"),
        ("conservative groups", meta["grouping"] + f" (share {rules['group_min']:g})"),
        ("low-data below", f"{rules['min_neff']:g} effective sequences"),
        ("JSD window", str(meta["window"])),
        ("frame", frame.get("note") or "not tied"),
    ]


_CONTRAST_CITATIONS = [
    "Lin J (1991) Divergence measures based on the Shannon entropy. IEEE Trans Inf Theory 37:145-151.",
    "Miller GA (1955) Note on the bias of information estimates. In: Quastler H (ed) Information Theory in "
    "Psychology. Free Press, pp 95-100.",
    "Sokal RR, Rohlf FJ (1995) Biometry, 3rd edn. Freeman (the G-test of independence).",
]
_PERMUTATION_CITATION = ["Good P (2005) Permutation, Parametric, and Bootstrap Tests of Hypotheses, 3rd edn. "
                         "Springer."]


def _contrast_section(aligned: Alignment, folder: Path, options: ScoreOptions, settings: dict, inputs: list,
                      files: list[str]) -> dict:
    """Compute the group contrast, write contrast.tsv and its figure; what the template's section shows."""
    from globcons.plots import figures
    from globcons.analysis.contrast import CONTRAST_CLASSES, assign_groups, contrast_columns, draw_contrast, top_contrast

    top = int(settings.pop("top", 12))
    groups = assign_groups(aligned, groups_file=settings.pop("groups_file", None),
                           group_by=settings.pop("group_by", None))
    table = contrast_columns(aligned, groups, weights=options.weights, identity=options.identity, rules=options.rules,
                             reference=options.reference, frame=options.frame, **settings)
    meta = table.attrs
    files += write_table(table, folder / "contrast.tsv", "tsv", metadata=meta, inputs=inputs)
    figure = draw_contrast(table, aligned, groups, top=top)
    for ext in ("svg", "png"):
        figures.save_figure(figure, folder / f"contrast.{ext}", inputs)
        files.append(str(folder / f"contrast.{ext}"))
    best = top_contrast(table, top)
    shown = ["column", "frame_label", "sites", "class", "contrast", "mi", "pvalue"]
    shown += ["pvalue_permutation"] if "pvalue_permutation" in best else []
    shown += [c for c in best.columns if c.startswith("consensus_")]
    group_text = ", ".join(f"{g} ({v['rows']} sequences, {v['effective_size']:.1f} effective)"
                           for g, v in meta["groups"].items())
    methods = (
        f"Positions that distinguish the groups {group_text} were scored by the generalised Jensen-Shannon "
        "divergence of the groups' weighted residue distributions, each group weighted by its effective size "
        "(Lin 1991), and by the mutual information between residue and group with the Miller-Madow correction "
        "(Miller 1955); significance came from the G-test of the residue-by-group table (Sokal and Rohlf 1995)"
        + (f" and from {meta['permutations']} permutations of the group labels" if meta["permutations"] else "")
        + f". Groups with fewer than {meta['min_group_neff']:g} effective sequences were left out. A column was "
        f"group-specific when every group's consensus carried at least {meta['conserved_min']:g} of its residue "
        "weight and the consensus differed between groups, shared when the consensus was the same in all, "
        f"gap-rich above a gap fraction of {meta['max_gaps']:g}, and mixed otherwise."
    )
    return {
        "methods": methods,
        "figure_uri": _data_uri(folder / "contrast.svg", "image/svg+xml"),
        "groups": [(g, v["rows"], f"{v['effective_size']:.1f}") for g, v in meta["groups"].items()],
        "left_out": [(g, v["rows"], f"{v['effective_size']:.1f}") for g, v in meta["left_out_groups"].items()],
        "min_group_neff": f"{meta['min_group_neff']:g}",
        "ungrouped": meta["ungrouped_rows"],
        "class_counts": [(c, meta["class_counts"][c]) for c in CONTRAST_CLASSES],
        "columns": shown,
        "rows": [[(name, _text_cell(value)) for name, value in zip(shown, record)]
                 for record in best[shown].itertuples(index=False, name=None)],
        "conserved_min": f"{meta['conserved_min']:g}",
        "max_gaps": f"{meta['max_gaps']:g}",
        "permutations": meta["permutations"],
    }


def write_report(alignment: str | os.PathLike | Alignment, out_dir: str | os.PathLike,
                 options: ScoreOptions | None = None, fmt: str | None = None, keep_inserts: bool = False,
                 logos: bool = True, contrast: dict | None = None) -> ReportResult:
    """Write the report of an alignment into ``out_dir`` (created if missing).

    Parameters
    ----------
    alignment
        A path (read with :func:`globcons.io.readers.read_alignment`) or an Alignment.
    out_dir
        The folder; files in it that the report does not write are left alone.
    options
        Scoring options (defaults of :class:`~globcons.analysis.columns.ScoreOptions`).
    logos
        Draw a logo of each helix (the slowest part).
    contrast
        Add the group contrast: keyword arguments ``groups_file`` or ``group_by`` (see
        :func:`globcons.analysis.contrast.assign_groups`) and optionally ``min_group_neff``, ``permutations``, ``seed``,
        ``conserved_min``, ``top`` (positions shown, default 12).
    """
    from globcons.plots import figures

    folder = Path(out_dir)
    if folder.exists() and not folder.is_dir():
        raise OutputError("exists and is not a folder", source=str(folder))
    inputs = [] if isinstance(alignment, Alignment) else [alignment]
    aligned = alignment if isinstance(alignment, Alignment) else read_alignment(alignment, format=fmt,
                                                                                 keep_inserts=keep_inserts)
    options = options or ScoreOptions()
    table = score_columns(aligned, options)
    folder.mkdir(parents=True, exist_ok=True)
    files: list[str] = []
    meta = table.attrs
    files += write_table(table, folder / "columns.tsv", "tsv", metadata=meta, inputs=inputs)
    for ext in ("md", "tex"):
        files += write_table(table, folder / f"columns.{ext}", ext, metadata=meta, inputs=inputs,
                             caption=f"Column conservation of {Path(meta['input']).name}")
    profile_uri = ""
    figure = figures.draw_profile(table)
    for ext in ("svg", "png"):
        figures.save_figure(figure, folder / f"profile.{ext}", inputs)
        files.append(str(folder / f"profile.{ext}"))
    profile_uri = _data_uri(folder / "profile.svg", "image/svg+xml")

    logo_uris = []
    labels = table["frame_label"].tolist()
    if logos:
        for helix in HELICES:
            columns = [int(c) for c, label in zip(table["column"], labels) if label and segment_of(label) == helix]
            if not columns:
                continue
            path = folder / f"logo_{helix}.svg"
            figure = figures.draw_logo(aligned, columns, weights=meta["weights"], labels=[labels[c - 1] for c in columns],
                                       max_gaps=meta["rules"]["max_gaps"], title=f"helix {helix}",
                                       identity=meta["identity"] or 0.8)
            figures.save_figure(figure, path, inputs)
            files.append(str(path))
            logo_uris.append((helix, _data_uri(path, "image/svg+xml")))

    contrast_section = None
    methods = methods_text(table)
    citations = _citations(meta)
    if contrast:
        contrast_section = _contrast_section(aligned, folder, options, dict(contrast), inputs, files)
        methods += " " + contrast_section["methods"]
        citations += _CONTRAST_CITATIONS + (_PERMUTATION_CITATION if contrast_section["permutations"] else [])
    with atomic_output(folder / "methods.md", inputs) as stream:
        stream.write("## Methods\n\n" + methods + "\n\n### References\n\n"
                     + "\n".join(f"- {c}" for c in citations) + "\n")
    files.append(str(folder / "methods.md"))

    rows = [[(name, _text_cell(value)) for name, value in zip(table.columns, record)]
            for record in table.itertuples(index=False, name=None)]
    site_rows = table[table["sites"] != ""].to_dict("records")
    notes = []
    frame = meta.get("frame") or {}
    if frame.get("source") == "none":
        notes.append(frame.get("note", ""))
    from jinja2 import Environment

    environment = Environment(autoescape=True, keep_trailing_newline=True)
    template_text = (resources.files("globcons") / "data" / "templates" / "report.html.j2").read_text(encoding="utf-8")
    html = environment.from_string(template_text).render(
        input_name=Path(meta["input"]).name, version=__version__,
        generated=_dt.date.today().isoformat(), caution=CAUTION_TEXT,
        options=_options_list(table, aligned), sequences=meta["sequences"], effective=meta["effective_sequences"],
        columns=meta["columns"], class_counts=list(meta["class_counts"].items()),
        frame_note=frame.get("note", ""), profile_uri=profile_uri, logos=logo_uris, sites=site_rows,
        low_data=meta["low_data_columns"], min_neff=f"{meta['rules']['min_neff']:g}", notes=notes,
        table_columns=list(table.columns), numeric=_NUMERIC, table_rows=rows, methods=methods,
        citations=citations, contrast=contrast_section,
    )
    with atomic_output(folder / "report.html", inputs) as stream:
        stream.write(html)
    files.insert(0, str(folder / "report.html"))
    return ReportResult(folder, tuple(files), table)

