"""Tests of gammatrace.tables.subgroups: enumeration, identification, frames, correlation."""

import doctest
import importlib
import json

import numpy as np
import pytest
from _symmetry_helpers import member_index
from gammatrace.errors import TableError
from gammatrace.tables import get_table
from gammatrace.tables.subgroups import SubgroupEmbedding, correlate, identify_group, subgroups

COTTON_CORR = "F. A. Cotton, Chemical Applications of Group Theory, 3rd ed., correlation tables"
WDC = "E. B. Wilson, J. C. Decius, P. C. Cross, Molecular Vibrations, Appendix X"


def _relabelled(corr, relabel):
    """A correlation with its subgroup labels read through ``relabel``."""
    return {k: {relabel.get(kk, kk): v for kk, v in sub.items()} for k, sub in corr.items()}


def _u(d):
    """Same correlation with g -> u on both sides (for centrosymmetric pairs)."""
    return {k[:-1] + "u": {kk[:-1] + "u": v for kk, v in sub.items()} for k, sub in d.items()}


# Published correlations; the first embedding (which keeps the parent's z and x axes, as
# printed tables orient the subgroup) must match, unless noted.
PUBLISHED = [
    # Source: Cotton, correlation table for Td  # from memory
    (
        "Td",
        "C3v",
        {
            "A1": {"A1": 1},
            "A2": {"A2": 1},
            "E": {"E": 1},
            "T1": {"A2": 1, "E": 1},
            "T2": {"A1": 1, "E": 1},
        },
    ),
    # Source: Cotton, correlation table for Td  # from memory
    (
        "Td",
        "C2v",
        {
            "A1": {"A1": 1},
            "A2": {"A2": 1},
            "E": {"A1": 1, "A2": 1},
            "T1": {"A2": 1, "B1": 1, "B2": 1},
            "T2": {"A1": 1, "B1": 1, "B2": 1},
        },
    ),
    # Source: Cotton, correlation table for Td  # from memory
    (
        "Td",
        "D2d",
        {
            "A1": {"A1": 1},
            "A2": {"B1": 1},
            "E": {"A1": 1, "B1": 1},
            "T1": {"A2": 1, "E": 1},
            "T2": {"B2": 1, "E": 1},
        },
    ),
    # Source: Cotton, correlation table for Oh (C2' of D4h along the C4 axes)  # from memory
    (
        "Oh",
        "D4h",
        {
            "A1g": {"A1g": 1},
            "A2g": {"B1g": 1},
            "Eg": {"A1g": 1, "B1g": 1},
            "T1g": {"A2g": 1, "Eg": 1},
            "T2g": {"B2g": 1, "Eg": 1},
            **_u(
                {
                    "A1g": {"A1g": 1},
                    "A2g": {"B1g": 1},
                    "Eg": {"A1g": 1, "B1g": 1},
                    "T1g": {"A2g": 1, "Eg": 1},
                    "T2g": {"B2g": 1, "Eg": 1},
                }
            ),
        },
    ),
    # Source: Cotton, correlation table for Oh  # from memory
    (
        "Oh",
        "D3d",
        {
            "A1g": {"A1g": 1},
            "A2g": {"A2g": 1},
            "Eg": {"Eg": 1},
            "T1g": {"A2g": 1, "Eg": 1},
            "T2g": {"A1g": 1, "Eg": 1},
            **_u(
                {
                    "A1g": {"A1g": 1},
                    "A2g": {"A2g": 1},
                    "Eg": {"Eg": 1},
                    "T1g": {"A2g": 1, "Eg": 1},
                    "T2g": {"A1g": 1, "Eg": 1},
                }
            ),
        },
    ),
    # Source: Cotton, correlation table for Oh (σv of C4v = σh of Oh)  # from memory
    (
        "Oh",
        "C4v",
        {
            "A1g": {"A1": 1},
            "A2g": {"B1": 1},
            "Eg": {"A1": 1, "B1": 1},
            "T1g": {"A2": 1, "E": 1},
            "T2g": {"B2": 1, "E": 1},
            "A1u": {"A2": 1},
            "A2u": {"B2": 1},
            "Eu": {"A2": 1, "B2": 1},
            "T1u": {"A1": 1, "E": 1},
            "T2u": {"B1": 1, "E": 1},
        },
    ),
    # Source: Cotton, correlation table for D6h (σv of C6v = σv of D6h)  # from memory
    (
        "D6h",
        "C6v",
        {
            "A1g": {"A1": 1},
            "A2g": {"A2": 1},
            "B1g": {"B2": 1},
            "B2g": {"B1": 1},
            "E1g": {"E1": 1},
            "E2g": {"E2": 1},
            "A1u": {"A2": 1},
            "A2u": {"A1": 1},
            "B1u": {"B1": 1},
            "B2u": {"B2": 1},
            "E1u": {"E1": 1},
            "E2u": {"E2": 1},
        },
    ),
    # Source: Wilson, Decius & Cross, Appendix X, Ih  # from memory
    (
        "Ih",
        "D5d",
        {
            "Ag": {"A1g": 1},
            "T1g": {"A2g": 1, "E1g": 1},
            "T2g": {"A2g": 1, "E2g": 1},
            "Gg": {"E1g": 1, "E2g": 1},
            "Hg": {"A1g": 1, "E1g": 1, "E2g": 1},
            **_u(
                {
                    "Ag": {"A1g": 1},
                    "T1g": {"A2g": 1, "E1g": 1},
                    "T2g": {"A2g": 1, "E2g": 1},
                    "Gg": {"E1g": 1, "E2g": 1},
                    "Hg": {"A1g": 1, "E1g": 1, "E2g": 1},
                }
            ),
        },
    ),
    # Source: Wilson, Decius & Cross, Appendix X, Ih  # from memory
    (
        "Ih",
        "D3d",
        {
            "Ag": {"A1g": 1},
            "T1g": {"A2g": 1, "Eg": 1},
            "T2g": {"A2g": 1, "Eg": 1},
            "Gg": {"A1g": 1, "A2g": 1, "Eg": 1},
            "Hg": {"A1g": 1, "Eg": 2},
            **_u(
                {
                    "Ag": {"A1g": 1},
                    "T1g": {"A2g": 1, "Eg": 1},
                    "T2g": {"A2g": 1, "Eg": 1},
                    "Gg": {"A1g": 1, "A2g": 1, "Eg": 1},
                    "Hg": {"A1g": 1, "Eg": 2},
                }
            ),
        },
    ),
    # Source: Wilson, Decius & Cross, Appendix X, Ih  # from memory
    (
        "Ih",
        "Th",
        {
            "Ag": {"Ag": 1},
            "T1g": {"Tg": 1},
            "T2g": {"Tg": 1},
            "Gg": {"Ag": 1, "Tg": 1},
            "Hg": {"Eg": 1, "Tg": 1},
            **_u(
                {
                    "Ag": {"Ag": 1},
                    "T1g": {"Tg": 1},
                    "T2g": {"Tg": 1},
                    "Gg": {"Ag": 1, "Tg": 1},
                    "Hg": {"Eg": 1, "Tg": 1},
                }
            ),
        },
    ),
    # Source: Cotton, correlation table for C∞v  # from memory
    (
        "C∞v",
        "C2v",
        {
            "Σ+": {"A1": 1},
            "Σ-": {"A2": 1},
            "Π": {"B1": 1, "B2": 1},
            "Δ": {"A1": 1, "A2": 1},
            "Φ": {"B1": 1, "B2": 1},
            "Γ": {"A1": 1, "A2": 1},
            "H": {"B1": 1, "B2": 1},
            "I": {"A1": 1, "A2": 1},
        },
    ),
    # Source: Cotton, correlation table for D∞h (z of D2h along the molecular axis)
    # from memory
    (
        "D∞h",
        "D2h",
        {
            "Σg+": {"Ag": 1},
            "Σg-": {"B1g": 1},
            "Πg": {"B2g": 1, "B3g": 1},
            "Δg": {"Ag": 1, "B1g": 1},
            "Φg": {"B2g": 1, "B3g": 1},
            "Γg": {"Ag": 1, "B1g": 1},
            "Hg": {"B2g": 1, "B3g": 1},
            "Ig": {"Ag": 1, "B1g": 1},
            "Σu+": {"B1u": 1},
            "Σu-": {"Au": 1},
            "Πu": {"B2u": 1, "B3u": 1},
            "Δu": {"Au": 1, "B1u": 1},
            "Φu": {"B2u": 1, "B3u": 1},
            "Γu": {"Au": 1, "B1u": 1},
            "Hu": {"B2u": 1, "B3u": 1},
            "Iu": {"Au": 1, "B1u": 1},
        },
    ),
]


@pytest.mark.parametrize("group, sub, expected", PUBLISHED, ids=lambda x: str(x)[:12])
def test_published_correlations(group, sub, expected):
    result = correlate(group, sub)
    assert result["group"] == get_table(group).name and result["subgroup"] == sub
    assert result["embeddings"][0]["correlation"] == expected
    assert list(result["embeddings"][0]["correlation"]) == [
        ir.label for ir in get_table(group).irreps
    ]


def test_d6h_to_d3h_has_both_embeddings():
    # Source: Cotton, correlation table for D6h, columns D3h (C2' -> C2) and D3h (C2'' -> C2)
    # from memory
    c2p = {
        "A1g": {"A1'": 1},
        "A2g": {"A2'": 1},
        "B1g": {"A1''": 1},
        "B2g": {"A2''": 1},
        "E1g": {"E''": 1},
        "E2g": {"E'": 1},
        "A1u": {"A1''": 1},
        "A2u": {"A2''": 1},
        "B1u": {"A1'": 1},
        "B2u": {"A2'": 1},
        "E1u": {"E'": 1},
        "E2u": {"E''": 1},
    }
    c2pp = dict(c2p, B1g={"A2''": 1}, B2g={"A1''": 1}, B1u={"A2'": 1}, B2u={"A1'": 1})
    result = correlate("D6h", "D3h")
    corrs = [e["correlation"] for e in result["embeddings"]]
    assert len(corrs) == 2
    assert corrs[0] == c2p and corrs[1] == c2pp
    assert "3C2 from 3C2'" in result["embeddings"][0]["description"]
    assert "3C2 from 3C2''" in result["embeddings"][1]["description"]


def test_d6h_to_d2h_lists_each_axis_choice():
    # Derived by hand from the D6h and D2h characters of Cotton, Appendix IIA, with C2(x)
    # of D2h along C2' of D6h  # from memory
    expected = {
        "A1g": {"Ag": 1},
        "A2g": {"B1g": 1},
        "B1g": {"B3g": 1},
        "B2g": {"B2g": 1},
        "E1g": {"B2g": 1, "B3g": 1},
        "E2g": {"Ag": 1, "B1g": 1},
        "A1u": {"Au": 1},
        "A2u": {"B1u": 1},
        "B1u": {"B3u": 1},
        "B2u": {"B2u": 1},
        "E1u": {"B2u": 1, "B3u": 1},
        "E2u": {"Au": 1, "B1u": 1},
    }
    embeddings = correlate("D6h", "D2h")["embeddings"]
    # the three D2h of D6h are conjugate (by C6): one entry, the other axis choices as notes
    assert len(embeddings) == 1
    assert embeddings[0]["correlation"] == expected
    corrs = [repr(expected)] + [
        repr(_relabelled(expected, other["relabel"])) for other in embeddings[0]["other_namings"]
    ]
    assert len(set(corrs)) == len(corrs) == 6  # which C2 is z, which is x: all distinct


def test_oh_to_d4h_is_one_entry_with_the_other_naming_as_a_note(capsys):
    # Source: Cotton, correlation table for Oh, column D4h (C2' of D4h along the C4 axes of
    # Oh): A1g -> A1g, A2g -> B1g, Eg -> A1g + B1g, T1g -> A2g + Eg, T2g -> B2g + Eg, and u
    # likewise  # from memory. The three D4h of Oh are conjugate (common practice).
    result = correlate("Oh", "D4h")
    (entry,) = result["embeddings"]
    expected = dict(next(e for g, h, e in PUBLISHED if (g, h) == ("Oh", "D4h")))
    assert entry["correlation"] == expected
    assert expected["A2g"] == {"B1g": 1} and expected["T2u"] == {"B2u": 1, "Eu": 1}
    (other,) = entry["other_namings"]
    # C2' and C2'' named the other way round exchange B1 and B2 (Cotton, D4h table: B1 is
    # +1 on C2', B2 on C2''; from memory)
    assert other["relabel"] == {"B1g": "B2g", "B2g": "B1g", "B1u": "B2u", "B2u": "B1u"}
    assert "2C2' from 6C2" in other["note"] and "B1g ↔ B2g" in other["note"]
    # the command line prints one header and the naming as a note
    from gammatrace.cli import main

    assert main(["correlate", "Oh", "D4h"]) == 0
    out = capsys.readouterr().out
    assert out.count("D4h with z along") == 1 and out.count("(note: ") == 1
    assert main(["correlate", "Oh", "D4h", "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert len(data["embeddings"]) == 1 and data["embeddings"][0]["other_namings"] == [other]


def test_d6h_to_c2v_keeps_the_inequivalent_subgroups():
    # The C2 of a C2v in D6h lies along the C6 axis, along a C2' or along a C2'' axis: three
    # classes of D6h, so three subgroups that no operation of D6h maps onto each other
    # (common practice). Correlations derived by hand from the D6h and C2v tables of
    # Cotton, Appendix IIA (from memory), σv(xz) taken from σv of D6h where it can be.
    result = correlate("D6h", "C2v")
    entries = result["embeddings"]
    assert len(entries) == 3
    assert "3C2'" not in entries[0]["description"]
    assert "C2 from 3C2'" in entries[1]["description"]
    assert "C2 from 3C2''" in entries[2]["description"]
    assert entries[0]["correlation"] == {
        "A1g": {"A1": 1},
        "A2g": {"A2": 1},
        "B1g": {"B2": 1},
        "B2g": {"B1": 1},
        "E1g": {"B1": 1, "B2": 1},
        "E2g": {"A1": 1, "A2": 1},
        "A1u": {"A2": 1},
        "A2u": {"A1": 1},
        "B1u": {"B1": 1},
        "B2u": {"B2": 1},
        "E1u": {"B1": 1, "B2": 1},
        "E2u": {"A1": 1, "A2": 1},
    }
    # through C2': A2g is +1 on E and σh, −1 on C2' and σv -> B2; B1u is +1 on C2' and σv
    # (−1 on σh) -> A1; through C2'': B2g is +1 on C2'' and σd -> A2... read by hand
    assert entries[1]["correlation"]["A2g"] == {"B2": 1}
    assert entries[1]["correlation"]["B1u"] == {"A1": 1}
    assert entries[2]["correlation"]["B2u"] == {"A1": 1}
    assert entries[2]["correlation"]["B2g"] == {"A2": 1}
    # which of its two mirrors is σv(xz) is a naming: one note each, B1 <-> B2
    for e in entries:
        assert [o["relabel"] for o in e["other_namings"]] == [{"B1": "B2", "B2": "B1"}]


def _groups_up_to(order):
    names = {"Cs", "Ci", "T", "Td", "Th", "O", "Oh"}
    for n in range(2, order + 1):
        names |= {f"C{n}", f"C{n}v", f"C{n}h", f"D{n}", f"D{n}h", f"D{n}d"}
        if n % 2 == 0 and n >= 4:
            names.add(f"S{n}")
    return sorted(g for g in names if len(get_table(g).operations) <= order)


def test_correlate_gives_one_entry_per_subgroup_class_up_to_order_48():
    """Every group of order ≤ 48 against each of its subgroups: no two entries alike."""
    checked = 0
    for group in [*_groups_up_to(48), "C∞v", "D∞h"]:
        subs = subgroups(group)
        for name in sorted({s.name for s in subs}):
            sub = get_table(name)
            dims = {ir.label: ir.dim for ir in sub.irreps}
            entries = correlate(group, name)["embeddings"]
            keys = [(repr(e["correlation"]), e["description"]) for e in entries]
            assert len(set(keys)) == len(keys), (group, name)
            assert len({d for _, d in keys}) == len(keys), (group, name)
            if not get_table(group).is_linear:
                # one entry per conjugacy class of such subgroups in the group
                assert len(entries) == sum(1 for s in subs if s.name == name), (group, name)
            for e in entries:
                seen = {repr(e["correlation"])}
                for other in e["other_namings"]:
                    relabel = other["relabel"]
                    # a permutation of the subgroup's labels that keeps dimensions
                    assert relabel and sorted(relabel) == sorted(relabel.values())
                    assert all(dims[a] == dims[b] for a, b in relabel.items())
                    renamed = repr(_relabelled(e["correlation"], relabel))
                    assert renamed not in seen, (group, name)
                    seen.add(renamed)
            checked += 1
    assert checked > 1000


@pytest.mark.parametrize("group", ["D6h", "Oh", "Td", "C4v", "D3d", "S6", "C∞v"])
def test_every_correlation_preserves_dimensions(group):
    parent = get_table(group)
    for name in sorted({s.name for s in subgroups(group)}):
        sub = get_table(name)
        dims = {ir.label: ir.dim for ir in sub.irreps}
        for emb in correlate(group, name)["embeddings"]:
            for label, parts in emb["correlation"].items():
                want = parent.irreps[parent.index(label)].dim
                assert sum(dims[k] * v for k, v in parts.items()) == want, (group, name, label)


def test_not_a_subgroup_lists_the_subgroups():
    with pytest.raises(TableError) as err:
        correlate("Td", "C4v")
    msg = str(err.value)
    assert "not a subgroup of Td" in msg and "D2d" in msg and "C3v" in msg
    with pytest.raises(TableError, match="not a subgroup of C∞v"):
        correlate("C∞v", "D2h")


@pytest.mark.parametrize(
    "group, count",
    [
        # Numbers of conjugacy classes of subgroups: Td ≅ S4 has 11, Oh ≅ S4 × C2 has 33,
        # Ih ≅ A5 × C2 has 22, C3v ≅ S3 has 4.  # from memory
        ("Td", 11),
        ("Oh", 33),
        ("Ih", 22),
        ("C3v", 4),
    ],
)
def test_number_of_subgroup_classes(group, count):
    assert len(subgroups(group)) == count


@pytest.mark.parametrize("group", ["D6h", "Oh", "Td", "D4d", "S8", "C6h"])
def test_subgroup_embeddings_are_groups_in_their_frames(group):
    parent = get_table(group)
    for emb in subgroups(group):
        assert isinstance(emb, SubgroupEmbedding)
        ops = parent.operations[emb.op_indices]
        np.testing.assert_allclose(ops, emb.operations)
        products = np.einsum("aij,bjk->abik", ops, ops).reshape(-1, 3, 3)
        member_index(ops, products)  # closed: raises otherwise
        f = emb.rotation
        np.testing.assert_allclose(f @ f.T, np.eye(3), atol=1e-12)
        assert np.linalg.det(f) > 0
        canon = get_table(emb.name).operations
        idx = member_index(canon, f @ ops @ f.T)
        assert len(np.unique(idx)) == len(canon) == len(ops)
        assert emb.name in emb.description


@pytest.mark.parametrize(
    "name",
    [
        "C1",
        "Cs",
        "Ci",
        "C2",
        "C5",
        "C2v",
        "C4v",
        "C3h",
        "C4h",
        "S4",
        "S6",
        "S8",
        "D2",
        "D3",
        "D2h",
        "D4h",
        "D2d",
        "D3d",
        "D5d",
        "T",
        "Td",
        "Th",
        "O",
        "Oh",
        "I",
        "Ih",
    ],
)
def test_identify_group_names_canonical_sets(name):
    t = get_table(name)
    assert identify_group(t.operations) == name
    rng = np.random.default_rng(1)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    q *= np.sign(np.linalg.det(q))
    assert identify_group(q @ t.operations @ q.T) == name  # any orientation


def test_linear_subgroups_have_no_indices():
    subs = subgroups("C∞v")
    assert all(s.op_indices is None for s in subs)
    assert {"C2v", "C3v", "Cs", "C1"} <= {s.name for s in subs}


def test_docstring_examples():
    # The package exports the function subgroups, which shadows the module's name.
    module = importlib.import_module("gammatrace.tables.subgroups")
    result = doctest.testmod(module)
    assert result.failed == 0 and result.attempted > 0
