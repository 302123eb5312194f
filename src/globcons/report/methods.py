"""The methods paragraph of a report and its citations, generated from the options a table was made with."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

__all__ = ["methods_text", "citations", "contrast_methods_text", "rates_methods_text", "reference_list",
           "structure_methods_text", "CONTRAST_CITATIONS", "PERMUTATION_CITATION", "RATES_CITATIONS",
           "STRUCTURE_CITATIONS"]


def citations(meta: dict) -> list[str]:
    """References for the methods a column table's metadata says were used."""
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
    cited.append("Morcos F et al. (2011) Direct-coupling analysis of residue coevolution captures native "
                 "contacts across many protein families. PNAS 108:E1293-E1301.")
    if meta.get("effective_sequences_error"):
        cited.append("Cochran WG (1977) Sampling Techniques, 3rd edn. Wiley, New York (simple random sampling, "
                     "chapter 2: the estimated effective number and its standard error).")
    cited.append("Gelman A, Carlin JB, Stern HS, Dunson DB, Vehtari A, Rubin DB (2013) Bayesian Data Analysis, "
                 "3rd edn. CRC Press (the Dirichlet-multinomial update, chapter 3).")
    if meta.get("class_counts", {}).get("gap-rich", 0):
        cited.append("Jeffreys H (1946) An invariant form for the prior probability in estimation problems. "
                     "Proc R Soc Lond A 186:453-461 (the prior of the gap share behind a gap-rich support).")
    if meta.get("frame", {}).get("source") == "anchor":
        cited += ["Gribskov M, McLachlan AD, Eisenberg D (1987) Profile analysis: detection of distantly related "
                  "proteins. PNAS 84:4355-4358.",
                  "Gotoh O (1982) An improved algorithm for matching biological sequences. J Mol Biol 162:705-708.",
                  "Karlin S, Altschul SF (1990) Methods for assessing the statistical significance of molecular "
                  "sequence features by using general scoring schemes. PNAS 87:2264-2268."]
    if meta.get("rates"):
        cited += RATES_CITATIONS
        if meta["rates"].get("subset"):
            cited.append(SUBSET_CITATION)
    return cited


def _evalue(frame: dict) -> float:
    value = frame.get("evalue")
    return float("nan") if value is None else float(value)


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
                   f"Altschul 1990; E-value {_evalue(frame):.1e})."),
    }.get(frame.get("source"), "Columns were not tied to the globin helix frame.")
    method = meta.get("effective_sequences_method", "")
    sampled = "sampled" in method
    error = meta.get("effective_sequences_error")
    text = (
        f"Conservation of the {meta['sequences']} sequences and {meta['columns']} columns of "
        f"{Path(meta['input']).name} was computed with globcons {meta['version']}. Residue frequencies used "
        f"{weighting}. The effective number of sequences counted sequence clusters: each sequence weighed one "
        f"over the number of sequences at least {meta['identity']:.0%} identical to it over all columns (Morcos "
        "et al. 2011"
        + ((f", estimated from {meta.get('neff_sample', 0):g} randomly sampled sequences each compared with all "
            f"(standard error {error:.1f}; Cochran 1977)" if error else
            ", estimated by comparing every sequence with a fixed sample of the others") if sampled else "")
        + f"), {meta['effective_sequences']:.1f} in all; a column's effective number was the summed weight of "
        "the sequences holding a residue in it. For each column, the weighted Shannon entropy over the 20 "
        "standard residues (Shannon 1948; gaps and unknown residues excluded), the entropy over six property "
        "classes (Mirny and Shakhnovich 1999) and the Jensen-Shannon divergence from the BLOSUM62 background "
        "distribution were computed; conservation was one minus the normalised entropy, and every conservation "
        "score was multiplied by the fraction of non-gap weight (Capra and Singh 2007"
        + (f"; the divergence smoothed over {meta['window']} neighbouring columns on each side" if meta["window"]
           else "")
        + "). "
        f"Columns with a weighted gap fraction above {rules['max_gaps']:g} were classed gap-rich. The other classes "
        "came from the posterior distribution of a column's residue shares: a Dirichlet prior of total weight "
        f"{rules['prior_weight']:g} spread by the BLOSUM62 background frequencies, updated by the column's "
        "frequencies times its effective number of sequences (the conjugate update; Gelman et al. 2013), so that "
        "the share of any set of residues is Beta distributed. A residue's share of a column is the part of "
        "the column's residues it makes up, each sequence counted with its weight and gaps not counted. A "
        "column was invariant when the posterior probability that its most frequent residue makes up at least "
        f"{rules['invariant_min'] * 100:g}% of the column's residues was at least {rules['confidence']:g}; "
        f"conservative when the same held for its substitution group making up at least "
        f"{rules['group_min'] * 100:g}%, the group built greedily from the most frequent residue down under "
        f"{grouping}; and "
        "variable otherwise. That probability is reported as the column's support. Columns with fewer than "
        f"{rules['min_neff']:g} effective sequences were flagged as low-data"
        + (f", and the family as a whole held fewer than {rules['min_neff']:g} effective sequences, so its "
           "classes rest on little evidence" if meta.get("thin_family") else "")
        + ". "
        + frame_sentence
        + " Sequence logos show information in bits with the small-sample correction of Schneider et al. (1986)."
    )
    if meta.get("rates"):
        text += " " + rates_methods_text(meta)
    return text


RATES_CITATIONS = [
    "Le SQ, Gascuel O (2008) An improved general amino acid replacement matrix. Mol Biol Evol 25:1307-1320.",
    "Yang Z (1994) Maximum likelihood phylogenetic estimation from DNA sequences with variable rates over "
    "sites: approximate methods. J Mol Evol 39:306-314.",
    "Felsenstein J (1981) Evolutionary trees from DNA sequences: a maximum likelihood approach. J Mol Evol "
    "17:368-376.",
    "Saitou N, Nei M (1987) The neighbor-joining method: a new method for reconstructing phylogenetic trees. "
    "Mol Biol Evol 4:406-425.",
    "Byrd RH, Lu P, Nocedal J, Zhu C (1995) A limited memory algorithm for bound constrained optimization. "
    "SIAM J Sci Comput 16:1190-1208.",
]

SUBSET_CITATION = ("Efraimidis PS, Spirakis PG (2006) Weighted random sampling with a reservoir. Inf Process Lett "
                   "97:181-185.")


def rates_methods_text(meta: dict) -> str:
    """The methods sentences of the per-column rates, from ``meta["rates"]`` (see
    :func:`globcons.analysis.rate_columns.add_rate_columns`)."""
    rates = meta["rates"]
    rows = (f"a representative subset of {rates['rows_used']} of the {meta['sequences']} sequences (a weighted "
            f"sample without replacement, each sequence weighted one over its cluster size at "
            f"{meta['identity']:.0%} identity; Efraimidis and Spirakis 2006)" if rates["subset"]
            else f"all {rates['rows_used']} sequences")
    tree = ("a neighbour-joining tree (Saitou and Nei 1987) of distances corrected under the same model (the "
            "branch length at which the model predicts the observed proportion of differing residues)"
            if rates["tree_source"] == "neighbour joining" else "the topology of a tree supplied by the user")
    return (
        f"Relative evolutionary rates per column were estimated on {rows} under the LG model (Le and Gascuel "
        f"2008) with {rates['gamma_categories']} discrete gamma rate categories (Yang 1994), on {tree}. Branch "
        "lengths and the gamma shape were fitted by maximum likelihood (Felsenstein 1981; all branch lengths "
        "jointly by L-BFGS-B with analytic gradients, Byrd et al. 1995, after a common scale; the shape by a "
        f"bounded one-dimensional search), giving alpha = {rates['alpha']:.3g} and a total tree length of "
        f"{rates['tree_total_length']:.3g} substitutions per site. A column's rate is its posterior mean under "
        f"the fitted gamma prior, evaluated over {rates['posterior_categories']} equal-probability categories "
        f"(the empirical Bayes estimate of Yang 1994), with a central {rates['interval']:.0%} credible interval; gaps "
        "and unknown residues were treated as missing data. The rates are relative (the average column is 1), "
        "they do not carry the uncertainty of the tree or of alpha, and a column with few residues stays near "
        "the prior mean rather than looking conserved."
    )


CONTRAST_CITATIONS = [
    "Lin J (1991) Divergence measures based on the Shannon entropy. IEEE Trans Inf Theory 37:145-151.",
    "Miller GA (1955) Note on the bias of information estimates. In: Quastler H (ed) Information Theory in "
    "Psychology. Free Press, pp 95-100.",
    "Sokal RR, Rohlf FJ (1995) Biometry, 3rd edn. Freeman (the G-test of independence).",
    "Benjamini Y, Hochberg Y (1995) Controlling the false discovery rate: a practical and powerful approach to "
    "multiple testing. J R Stat Soc B 57:289-300.",
]


PERMUTATION_CITATION = ["Good P (2005) Permutation, Parametric, and Bootstrap Tests of Hypotheses, 3rd edn. "
                         "Springer."]



def reference_list(cited: list[str]) -> list[str]:
    """The references in a stable order: alphabetical by first author (then year and title), duplicates once.

    Examples
    --------
    >>> reference_list(["Shannon CE (1948) ...", "Capra JA, Singh M (2007) ...", "Shannon CE (1948) ..."])
    ['Capra JA, Singh M (2007) ...', 'Shannon CE (1948) ...']
    """
    return sorted(set(cited), key=lambda text: (text.casefold(), text))


def contrast_methods_text(meta: dict) -> str:
    """The methods sentences of a group contrast, from the metadata of its table."""
    group_text = ", ".join(f"{g} ({v['rows']} sequences, {v['effective_size']:.1f} effective)"
                           for g, v in meta["groups"].items())
    return (
        f"Positions that distinguish the groups {group_text} were scored by the generalised Jensen-Shannon "
        "divergence of the groups' weighted residue distributions, each group weighted by its effective size "
        "(Lin 1991), and by the mutual information between residue and group with the Miller-Madow correction "
        "(Miller 1955); significance came from the G-test of the residue-by-group table (Sokal and Rohlf 1995)"
        + (f" and from {meta['permutations']} permutations of the group labels" if meta["permutations"] else "")
        + ". Because many columns were tested, the p-values were corrected by the Benjamini-Hochberg procedure "
        "(Benjamini and Hochberg 1995) over the "
        + (f"{meta['tested_columns']} " if "tested_columns" in meta else "")
        + "columns with something to test; each column's q-value is the false discovery rate at which it would "
        f"count as significant. Groups with fewer than {meta['min_group_neff']:g} effective sequences were left "
        "out. A group counted as conserved in a column when its most common residue made up at least "
        f"{meta['conserved_min'] * 100:g}% of the group's residues there, each sequence counted with its weight and "
        "gaps not counted (its share of the residue weight), and the group had at most "
        f"{meta['max_gaps'] * 100:g}% gaps there. A column was group-specific when every group was conserved and "
        "their most common residues differed, shared when every group was conserved with the same residue, "
        f"gap-rich when more than {meta['max_gaps'] * 100:g}% of the grouped sequences had a gap there, and mixed "
        "otherwise."
    )


STRUCTURE_CITATIONS = [
    "Shrake A, Rupley JA (1973) Environment and exposure to solvent of protein atoms. Lysozyme and insulin. "
    "J Mol Biol 79:351-371.",
    "Tien MZ, Meyer AG, Sydykova DK, Spielman SJ, Wilke CO (2013) Maximum allowed solvent accessibilites of "
    "residues in proteins. PLoS ONE 8:e80635.",
    "Rost B, Sander C (1994) Conservation and prediction of solvent accessibility in protein families. "
    "Proteins 20:216-226.",
    "Cock PJA et al. (2009) Biopython: freely available Python tools for computational molecular biology and "
    "bioinformatics. Bioinformatics 25:1422-1423.",
]


def structure_methods_text(meta: dict) -> str:
    """The methods sentences of the structural columns, from the ``structure`` metadata of a column table."""
    return (
        f"Chain {meta['chain']} of {Path(str(meta['file'])).name} was placed on the alignment's columns by aligning "
        f"its sequence to the family profile ({meta['mapped']} of its {meta['residues']} residues placed). On the "
        "first model, waters and hydrogens left out, the solvent-accessible surface of each residue was computed "
        f"by the Shrake-Rupley method (Shrake and Rupley 1973; probe {meta['probe_radius']:g} A, "
        f"{meta['sphere_points']} points per atom; Biopython, Cock et al. 2009) and divided by the theoretical "
        "maximum accessibility of its residue type (Tien et al. 2013). Residues below "
        f"{meta['core_below']:g} were classed core, from {meta['surface_from']:g} surface and boundary between "
        "(the three-state cut-offs of Rost and Sander 1994). A residue with any atom within "
        f"{meta['heme_contact_distance']:g} A of a heme atom was a heme contact, and one within "
        f"{meta['interface_distance']:g} A of a protein atom of another chain lay at that chain's interface."
    )
