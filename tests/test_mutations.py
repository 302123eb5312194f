"""Mutation checks and site ranking on real chains and a synthetic family.

Sources: sequences are the UniProt entries in globcons/data/frame (P68871 beta, P69905 alpha, P02185 sperm
whale myoglobin); the positions (beta 6 = A3 the sickle-cell position, beta His92 / alpha His87 = F8 the
proximal His, myoglobin His64 = E7 the distal His) are nomenclature from memory, widely cited.
"""

import csv
import io

import numpy as np
import pytest

from globcons.analysis.family import family_from_alignment
from globcons.cli import main
from globcons.core.vocabulary import CAUTION
from globcons.errors import OptionError
from globcons.frame.reference import reference_chain
from globcons.mutations.judge import check, rank_sites
from globcons.mutations.target import HGVS_UNKNOWN, prepare_target
from helpers import alignment_of, planted_family

BETA = reference_chain("human_hemoglobin_beta")
ALPHA = reference_chain("human_hemoglobin_alpha")
MB = reference_chain("sperm_whale_myoglobin")


@pytest.fixture(scope="module")
def mature_beta():
    return prepare_target(BETA.mature_sequence, "beta")


def test_beta_sickle_position_is_a3_and_not_locked(mature_beta):
    row = check(mature_beta, ["E6V"]).iloc[0]
    assert (row["frame_label"], row["position"], row["verdict"]) == ("A3", 6, "open")
    assert row["property_change"].startswith("hydropathy +7.7")  # Kyte-Doolittle: E -3.5 -> V 4.2


def test_beta_proximal_his_is_locked_with_the_heme_ligand_reason(mature_beta):
    row = check(mature_beta, ["H92Y"]).iloc[0]
    assert row["frame_label"] == "F8" and row["verdict"] == "locked"
    assert "heme iron's protein ligand" in row["reasons"]
    # the built-in family is three chains: His in all three is no confident invariant, and the reasons say why
    assert row["column_class"] == "variable"
    assert "low_data: the family has only 3.0 effective sequences" in row["reasons"]


def test_alpha_f8_and_myoglobin_distal_his():
    alpha = check(("alpha", ALPHA.mature_sequence), ["H87Q"]).iloc[0]
    assert alpha["frame_label"] == "F8" and alpha["verdict"] == "locked"
    mb = check(("mb", MB.mature_sequence), ["H64L"]).iloc[0]
    assert mb["frame_label"] == "E7" and mb["verdict"] == "locked" and "distal His" in mb["reasons"]


def test_every_notation_gives_the_same_row():
    met_beta = prepare_target(BETA.full_sequence, "beta")
    mature = prepare_target(BETA.full_sequence, "beta", numbering="mature")
    rows = [check(mature, [text]).iloc[0] for text in ("E6V", "Glu6Val")]
    rows += [check(met_beta, [text]).iloc[0] for text in ("E7V", "p.Glu7Val", "p.E7V", "A3:V", "A3:Val")]
    keep = ["position", "mature_position", "hgvs", "frame_label", "column_class", "blosum", "property_change",
            "verdict", "reasons"]
    first = rows[0][keep].tolist()
    assert first[:4] == [7, 6, "p.Glu7Val", "A3"]
    for row in rows[1:]:
        assert row[keep].tolist() == first


def test_hgvs_on_the_met_led_chain_equals_e6v_on_the_mature_chain(mature_beta):
    met_led = check(prepare_target(BETA.full_sequence, "beta"), ["p.Glu7Val"]).iloc[0]
    plain = check(prepare_target(BETA.mature_sequence, "beta", numbering="mature"), ["E6V"]).iloc[0]
    for name in ("mature_position", "hgvs", "frame_label", "column_class", "verdict", "reasons"):
        assert met_led[name] == plain[name], name
    assert plain["hgvs"] == "p.Glu7Val" and plain["mature_position"] == 6


def test_wrong_wild_type_and_bad_positions_are_errors(mature_beta):
    with pytest.raises(OptionError, match="has E at position 6.*not K"):
        check(mature_beta, ["K6V"])
    with pytest.raises(OptionError, match="outside the target"):
        check(mature_beta, ["E600V"])
    with pytest.raises(OptionError, match="add --numbering mature"):
        check(mature_beta, ["p.Glu7Val"])  # a target without Met needs to be told its Met was removed
    with pytest.raises(OptionError, match="no residue at frame label"):
        check(mature_beta, ["CE1:V"])  # beta names that stretch CD, not CE


def test_pro_inside_a_helix_is_guarded_at_least():
    # Take the most tolerant helix position past the first turn (place 4 or more) and put a Pro there.
    target = prepare_target(MB.mature_sequence, "mb")
    plan = rank_sites(target)
    open_helix = plan[(plan["verdict"] == "open") & plan["frame_label"].str.match(r"^[A-H](1[0-9]|[4-9])$")]
    row = open_helix.iloc[0]
    mutation = f"{row['residue']}{row['position']}P"
    result = check(target, [mutation]).iloc[0]
    assert result["verdict"] == "guarded" and "Pro inside helix" in result["reasons"]


def test_plan_never_ranks_invariant_columns_above_variable_ones():
    alignment, keep = planted_family(MB.mature_sequence, 10, seed=11)
    family = family_from_alignment(alignment)
    target = prepare_target(MB.mature_sequence, "mb", family=family, row_columns=np.arange(len(MB.mature_sequence)))
    plan = rank_sites(target)
    classes = plan["column_class"].tolist()
    last_variable = max(i for i, c in enumerate(classes) if c == "variable")
    first_invariant = min(i for i, c in enumerate(classes) if c == "invariant")
    assert last_variable < first_invariant
    invariant_positions = set(plan.loc[plan["column_class"] == "invariant", "position"])
    assert set((keep + 1).tolist()) <= invariant_positions
    assert (plan.loc[plan["column_class"] == "invariant", "verdict"] == "locked").all()


def test_plan_options_exclude_and_top():
    target = prepare_target(MB.mature_sequence, "mb")
    plan = rank_sites(target, exclude_helices=["A", "H"], exclude_kinds=["heme-ligand"], top=20)
    assert len(plan) == 20 and plan["rank"].tolist() == list(range(1, 21))
    full = rank_sites(target, exclude_helices=["A", "H"], exclude_kinds=["heme-ligand"])
    assert not full["frame_label"].str.match(r"^[AH][0-9]").any() and "F8" not in set(full["frame_label"])
    with pytest.raises(OptionError, match="unknown helix"):
        rank_sites(target, exclude_helices=["Q"])


def test_cli_prints_the_caution_even_when_quiet(tmp_path, capsys):
    fasta = tmp_path / "beta.fa"
    fasta.write_text(f">beta\n{BETA.full_sequence}\n")
    assert main(["check", str(fasta), "--mutations", "E7V,H93Y", "--quiet"]) == 0
    captured = capsys.readouterr()
    # the thin built-in family is named in a warning (kept under --quiet), then the caution
    warning, caution = captured.err.strip().split("\n")
    assert warning.startswith("globcons: warning: family built-in reference chains: 3.0 effective sequences")
    assert caution.startswith("Caution:") and CAUTION in captured.err
    lines = captured.out.splitlines()
    assert lines[0].split("\t")[:4] == ["mutation", "position", "wild_type", "new_residue"] and len(lines) == 3
    out = tmp_path / "plan.md"
    assert main(["plan", str(fasta), "--top", "5", "-o", str(out), "--quiet"]) == 0
    assert out.read_text().rstrip().splitlines()[-1].startswith("Caution:")


def test_cli_mismatch_is_exit_2_naming_the_residue(tmp_path, capsys):
    fasta = tmp_path / "beta.fa"
    fasta.write_text(f">beta\n{BETA.full_sequence}\n")
    assert main(["check", str(fasta), "--mutations", "E6V"]) == 2
    err = capsys.readouterr().err
    assert "E6V: the target has P at position 6" in err and "--numbering mature" in err
    mutations = tmp_path / "m.txt"
    mutations.write_text("# proposals\nE7V\n\nnot-a-mutation\n")
    assert main(["check", str(fasta), "--mutations-file", str(mutations)]) == 2
    assert "m.txt:4" in capsys.readouterr().err


def test_trp_to_arg_in_an_aromatic_core_column_is_guarded_for_the_hydrophobic_core():
    # The column of an unstable hemoglobin variant's position (beta A12 Trp15): a family holding W 0.82,
    # F 0.13, L 0.04 there. Kyte-Doolittle rates Trp -0.9, so a hydropathy rule would miss the core; the
    # Fauchère-Pliška scale (W +2.25, F +1.79, L +1.70; R -1.01) calls the column a hydrophobic core.
    rng = np.random.default_rng(4)
    beta = BETA.mature_sequence
    site = 14  # beta Trp15, 0-based
    column = np.array(["W"] * 82 + ["F"] * 13 + ["L"] * 4 + ["W"])
    rows = []
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    for k in range(100):
        row = np.array(list(beta))
        change = rng.random(row.size) < 0.35  # distinct rows: each its own cluster
        row[change] = rng.choice(letters, int(change.sum()))
        row[site] = column[k]
        rows.append("".join(row))
    family = family_from_alignment(alignment_of(*rows))
    assert family.n_eff > 90 and not family.thin
    row = check(("beta", beta), ["W15R"], family=family).iloc[0]
    assert row["verdict"] in ("guarded", "locked")
    assert "hydrophobic core column" in row["reasons"] and "Fauchère & Pliška" in row["reasons"]
    assert "R is polar (-1.01)" in row["reasons"]
    # A hydrophobic replacement of the same Trp keeps the core: no core reason.
    assert "hydrophobic core" not in check(("beta", beta), ["W15F"], family=family).iloc[0]["reasons"]


def test_cli_check_shows_the_wild_type_residue(tmp_path, capsys):
    # globcons check beta.fa --mutations E7V,H93Y: human beta with its Met has Glu at 7 and His at 93
    # (the sickle-cell Glu6 and the proximal His92 in traditional numbering; UniProt P68871, from memory).
    fasta = tmp_path / "beta.fa"
    fasta.write_text(f">beta\n{BETA.full_sequence}\n")
    assert main(["check", str(fasta), "--mutations", "E7V,H93Y", "--quiet"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out), delimiter="\t"))
    assert [(r["mutation"], r["wild_type"], r["new_residue"], r["hgvs"], r["hgvs_note"]) for r in rows] == [
        ("E7V", "E", "V", "p.Glu7Val", ""), ("H93Y", "H", "Y", "p.His93Tyr", "")]


def test_cli_check_says_why_hgvs_is_blank(tmp_path, capsys):
    # globcons check mature.fa --mutations E6V: a target without its Met, counted as given, has no known
    # HGVS number; the cell stays blank, hgvs_note says why, and stderr says it once (exit 0).
    fasta = tmp_path / "mature.fa"
    fasta.write_text(f">beta_mature\n{BETA.mature_sequence}\n")
    assert main(["check", str(fasta), "--mutations", "E6V,H92Y"]) == 0
    captured = capsys.readouterr()
    rows = list(csv.DictReader(io.StringIO(captured.out), delimiter="\t"))
    assert [r["hgvs"] for r in rows] == ["", ""]
    assert all(r["hgvs_note"] == HGVS_UNKNOWN for r in rows)
    assert captured.err.count(f"globcons: warning: beta_mature: {HGVS_UNKNOWN}") == 1
    # With --numbering mature the Met is known to be removed: HGVS names, no note, no warning.
    assert main(["check", str(fasta), "--numbering", "mature", "--mutations", "E6V"]) == 0
    captured = capsys.readouterr()
    row = next(csv.DictReader(io.StringIO(captured.out), delimiter="\t"))
    assert (row["wild_type"], row["hgvs"], row["hgvs_note"]) == ("E", "p.Glu7Val", "")
    assert "HGVS numbering unknown" not in captured.err


def test_cli_plan_says_why_hgvs_is_blank(tmp_path, capsys):
    fasta = tmp_path / "mature.fa"
    fasta.write_text(f">beta_mature\n{BETA.mature_sequence}\n")
    assert main(["plan", str(fasta), "--top", "3", "--quiet"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out), delimiter="\t"))
    assert len(rows) == 3 and all(r["hgvs"] == "" and r["hgvs_note"] == HGVS_UNKNOWN for r in rows)
