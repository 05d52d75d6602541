"""Streamed ranking of a screened table: sorted parts merged in bounded blocks equal one sort."""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine import cli
from engine import screening
from engine.screening import merge as sm

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
SAMPLE = ROOT / "demo_sites" / "district_1000.csv"
sys.path.insert(0, str(ROOT / "demo_sites"))
import make_district  # noqa: E402


@pytest.fixture(scope="module")
def screened(ctx):
    """The sample district's results, unranked and shuffled (seeded), as parts would hold them."""
    table = screening.screen_local(SAMPLE, ctx).table
    return table.sample(frac=1.0, random_state=5).reset_index(drop=True)


def reference(table: pd.DataFrame) -> pd.DataFrame:
    """Independent reference: pandas' stable sort of the whole table on the ranking keys."""
    out = table.sort_values(["suitability_code", "best_aep_kwh", "id"],
                            ascending=[True, False, True], kind="stable").reset_index(drop=True)
    out["rank"] = np.arange(1, len(out) + 1, dtype=np.int64)
    return out


def spill(table, cuts, folder) -> list:
    """Write table[cuts[i]:cuts[i+1]] as sorted part files; return their paths in order."""
    paths = []
    for i, (a, b) in enumerate(zip(cuts[:-1], cuts[1:])):
        p = folder / f"part-{i:03d}.parquet"
        assert sm.write_sorted_part(table.iloc[a:b], p, block_rows=50) == b - a
        paths.append(p)
    return paths


def ties_table(n=600, seed=3) -> pd.DataFrame:
    """Result-shaped rows with many equal classes and AEPs, and ids repeated across rows."""
    rng = np.random.default_rng(seed)
    return pd.DataFrame({
        "rank": np.zeros(n, np.int64),
        "id": np.array([f"b{v}" for v in rng.integers(0, 40, n)], dtype=object),
        "line": np.arange(2, n + 2, dtype=np.int64),
        "suitability_code": rng.integers(0, 4, n).astype(np.int64),
        "best_aep_kwh": rng.choice([0.0, 125.5, 900.25, 1e-9], n),
        "reasons": np.array(["=HYPERLINK(x)" if v == 0 else "ok" for v in rng.integers(0, 9, n)],
                            dtype=object),
    })


@pytest.mark.parametrize("cuts_of", [
    lambda n: [0, n],                              # one part
    lambda n: [0, 10, 10, 400, 997, n],            # an empty part, unequal lengths
    lambda n: [0, 0, n // 2, n, n],                # empty first and last parts
    lambda n: list(range(0, n, 97)) + [n],         # many small parts
])
@pytest.mark.parametrize("block", [16, 300, 100_000])
def test_merge_equals_one_stable_sort(screened, ctx, tmp_path, cuts_of, block):
    """The merged CSV equals the whole table ranked at once, byte for byte, whatever the split."""
    paths = spill(screened, cuts_of(len(screened)), tmp_path)
    out = tmp_path / "ranked.csv"
    cols = screening.result_columns(ctx.turbines)
    got = sm.merge_sorted_parts(paths, out, columns=cols, block_rows=block, head_rows=25)
    ref = screening.finish_table(reference(screened), ctx.turbines)
    expected = tmp_path / "expected.csv"
    screening.write_ranked_csv(ref, expected)
    assert got.n_rows == len(screened) == 1000
    assert out.read_bytes() == expected.read_bytes()
    pd.testing.assert_frame_equal(screening.finish_table(got.head, ctx.turbines),
                                  ref.iloc[:25].reset_index(drop=True), check_exact=True)
    assert not list(tmp_path.glob(".ranked.csv.*"))  # no temporary file left


@pytest.mark.parametrize("block", [1, 5, 33, 10_000])
def test_merge_keeps_part_order_between_equal_keys(tmp_path, block):
    """Rows equal in class, AEP and id come out in table order, as a stable sort leaves them."""
    table = ties_table()
    paths = spill(table, [0, 150, 151, 151, 420, 600], tmp_path)
    out = tmp_path / "ranked.csv"
    sm.merge_sorted_parts(paths, out, columns=list(table.columns), block_rows=block)
    back = pd.read_csv(out, keep_default_na=False)
    ref = reference(table)
    assert back["line"].tolist() == ref["line"].tolist()  # line tells equal rows apart
    assert back["rank"].tolist() == list(range(1, 601))
    # Formula-like text defused as the shared CSV export does (OWASP CSV injection).
    assert set(back["reasons"]) == {"'=HYPERLINK(x)", "ok"}


def test_formula_text_defused_as_shared_export(tmp_path):
    """Every formula-like or carriage-return cell is written as engine.io.exports.safe_csv does."""
    from engine.io.exports import safe_csv

    table = ties_table(120, seed=6)
    odd = ["=1+1", "+cmd", "-2", "@SUM(A1)", "\ttab", "\r=x", "a\rb", "plain", "", "x=1"]
    table["id"] = np.array([f"{odd[i % len(odd)]}{i}" if i % 3 else odd[i % len(odd)]
                            for i in range(len(table))], dtype=object)
    paths = spill(table, [0, 70, 120], tmp_path)
    out = tmp_path / "ranked.csv"
    sm.merge_sorted_parts(paths, out, columns=list(table.columns), block_rows=16)
    # Reference: the shared export's writer on the whole table ranked at once.
    assert out.read_text(encoding="utf-8") == safe_csv(reference(table))


def test_missing_aep_ranks_last_in_its_class(tmp_path):
    """A missing AEP sorts after every number of its class, where pandas puts NaN."""
    table = ties_table(200, seed=8)
    table.loc[::7, "best_aep_kwh"] = np.nan
    paths = spill(table, [0, 60, 200], tmp_path)
    out = tmp_path / "ranked.csv"
    sm.merge_sorted_parts(paths, out, columns=list(table.columns), block_rows=9)
    back = pd.read_csv(out, keep_default_na=False, na_values=[""])
    assert back["line"].tolist() == reference(table)["line"].tolist()


def test_sort_part_is_rank_results_order(screened):
    """A part sorted for the merge is in rank_results' order (same keys, same directions)."""
    mine = sm.sort_part(screened).drop(columns="rank")
    theirs = screening.rank_results(screened).drop(columns="rank")
    pd.testing.assert_frame_equal(mine, theirs, check_exact=True)


def test_emitted_blocks_stay_within_files_times_block(tmp_path, monkeypatch):
    """No emitted block is larger than files x block rows: the buffer is bounded."""
    table = ties_table(3000, seed=4)
    cuts = [0, 500, 1700, 1701, 3000]
    paths = spill(table, cuts, tmp_path)
    sizes = []
    real = sm.array_bytes

    def spy(lines):
        sizes.append(len(lines))
        return real(lines)

    monkeypatch.setattr(sm, "array_bytes", spy)
    got = sm.merge_sorted_parts(paths, tmp_path / "r.csv", columns=list(table.columns),
                                block_rows=40)
    assert got.n_rows == 3000 and sum(sizes) == 3000
    assert max(sizes) <= 4 * 40
    assert sm.block_rows_for(1) == sm.MAX_BLOCK_ROWS
    assert sm.block_rows_for(10 ** 6) == sm.MIN_BLOCK_ROWS
    assert sm.block_rows_for(16) * 16 <= sm.MERGE_BUFFER_ROWS


def test_failed_merge_leaves_previous_file(tmp_path):
    """A merge that fails part-way leaves the previous output whole and no temporary file."""
    table = ties_table(100)
    paths = spill(table, [0, 50, 100], tmp_path)
    out = tmp_path / "ranked.csv"
    out.write_text("previous\n", encoding="utf-8")
    paths[1].write_bytes(b"not parquet")
    with pytest.raises(Exception):
        sm.merge_sorted_parts(paths, out, columns=list(table.columns), block_rows=10)
    assert out.read_text(encoding="utf-8") == "previous\n"
    assert not list(tmp_path.glob(".ranked.csv.*"))


def test_no_rows_gives_header_only(tmp_path, ctx):
    """Parts with no rows merge to the header line alone, like the in-memory writer."""
    empty = screening.empty_result(ctx)
    paths = spill(empty, [0, 0, 0], tmp_path)
    out, expected = tmp_path / "r.csv", tmp_path / "e.csv"
    got = sm.merge_sorted_parts(paths, out, columns=screening.result_columns(ctx.turbines))
    screening.write_ranked_csv(screening.finish_table(empty, ctx.turbines), expected)
    assert got.n_rows == 0 and out.read_bytes() == expected.read_bytes()


def test_dask_streamed_csv_equals_local_table(ctx, thread_client, tmp_path):
    """Dask's spilled-and-merged CSV equals the local engine's ranked CSV on 3000 buildings."""
    path = tmp_path / "d3k.csv"
    frame = make_district.make_district(3000, seed=12)
    frame.loc[40, "width_m"] = 0.0
    frame.loc[90, "id"] = frame.loc[91, "id"]
    frame.to_csv(path, index=False)
    loc = screening.screen_local(path, ctx, part_bytes=40_000)
    expected = tmp_path / "local.csv"
    screening.write_ranked_csv(loc.table, expected)
    out = tmp_path / "dask.csv"
    dk = screening.screen_dask(path, ctx, thread_client, part_bytes=40_000, out_csv=out)
    assert out.read_bytes() == expected.read_bytes()
    assert dk.problems == loc.problems and len(loc.problems) == 3  # 1 bad + 2 sharing an id
    pd.testing.assert_frame_equal(dk.table, loc.table.iloc[:1000], check_exact=True)
    assert [p.name for p in tmp_path.iterdir()] != [] and not list(tmp_path.glob(".dask.csv*"))
    gathered = screening.screen_dask(path, ctx, thread_client, part_bytes=40_000)
    pd.testing.assert_frame_equal(gathered.table, loc.table, check_exact=True)


def test_cli_out_with_workers_streams_same_csv(tmp_path):
    """`screen --out --workers 2` writes the same bytes as the local command."""
    src = tmp_path / "b.csv"
    pd.read_csv(SAMPLE).iloc[:300].to_csv(src, index=False)
    a, b = tmp_path / "local.csv", tmp_path / "dask.csv"
    base = ["screen", str(src), "--climate", str(DEMO), "--quiet"]
    assert cli.main(base + ["--out", str(a)]) == 0
    assert cli.main(base + ["--out", str(b), "--workers", "2"]) == 0
    assert a.read_bytes() == b.read_bytes()
    assert not list(tmp_path.glob(".dask.csv*"))


@pytest.mark.parametrize("seed", [3, 4, 11])
def test_ranking_order_equals_pandas_stable_sort_with_ties(seed):
    """ranking_order (numbers first, text only among ties) equals pandas' stable sort on the
    three keys, with many equal classes and AEPs, repeated ids, a NaN AEP, -0.0 and 0.0."""
    t = ties_table(seed=seed)
    t.loc[5, "best_aep_kwh"] = np.nan
    t.loc[7, "best_aep_kwh"] = -0.0
    got = t.take(sm.ranking_order(*sm.rank_key_arrays(t))).reset_index(drop=True)
    ref = reference(t).assign(rank=0)
    pd.testing.assert_frame_equal(got, ref, check_exact=True)
    # No ties at all: the numeric sort alone decides (the text is never compared).
    u = t.assign(best_aep_kwh=np.arange(len(t), dtype=float))
    got = u.take(sm.ranking_order(*sm.rank_key_arrays(u))).reset_index(drop=True)
    pd.testing.assert_frame_equal(got, reference(u).assign(rank=0), check_exact=True)


def test_local_streamed_csv_equals_in_memory_table(ctx, tmp_path):
    """The local engine's streamed run (parts read again for each pass, sorted parts spilled
    and merged) writes the CSV of the in-memory table, byte for byte, with the same problems;
    only the first rows are returned and nothing is left next to the output."""
    path = tmp_path / "d3k.csv"
    frame = make_district.make_district(3000, seed=13)
    frame.loc[17, "height_m"] = -4.0
    frame.loc[200, "id"] = frame.loc[2500, "id"]
    frame.to_csv(path, index=False)
    mem = screening.screen_local(path, ctx, part_bytes=30_000)
    expected = tmp_path / "memory.csv"
    screening.write_ranked_csv(mem.table, expected)
    out = tmp_path / "streamed.csv"
    st = screening.screen_local(path, ctx, part_bytes=30_000, out_csv=out)
    assert len(screening.table_parts(path, 30_000)) > 5
    assert out.read_bytes() == expected.read_bytes()
    assert st.problems == mem.problems and len(mem.problems) == 3
    assert st.n_rows == mem.n_rows and st.n_screened == mem.n_screened == 2997
    pd.testing.assert_frame_equal(st.table, mem.table.iloc[:1000], check_exact=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["d3k.csv", "memory.csv",
                                                          "streamed.csv"]


def test_streamed_run_counts_every_bad_row_but_lists_few(ctx, tmp_path):
    """Bad rows beyond the listed ones are counted, not held (the facts stay small)."""
    path = tmp_path / "bad.csv"
    frame = make_district.make_district(1500, seed=14)
    frame.loc[:499, "length_m"] = 0.0
    frame.to_csv(path, index=False)
    st = screening.screen_local(path, ctx, part_bytes=20_000, out_csv=tmp_path / "r.csv")
    assert st.n_left_out == 500 and st.n_screened == 1000
    assert len(st.bad_rows) <= screening.checks.MAX_LISTED_ROWS + 1
    assert st.problems[-1] == ("table", "300 more bad row(s) not listed")


def test_parquet_large_row_group_read_in_batches(ctx, tmp_path):
    """A Parquet row group larger than a part is read in bounded batches, rows numbered as in
    the file, with the same results as the same table as CSV in the same parts."""
    frame = make_district.make_district(1200, seed=15)
    pq_path = tmp_path / "b.parquet"
    frame.to_parquet(pq_path, row_group_size=1200, index=False)
    parts = screening.table_parts(pq_path, part_rows=500)
    assert [(p.first_line, p.rows) for p in parts] == [(1, (0, 500)), (501, (500, 1000)),
                                                       (1001, (1000, 1200))]
    got = pd.concat([screening.read_part(p) for p in parts], ignore_index=True)
    assert got["line"].tolist() == list(range(1, 1201))
    assert got["id"].tolist() == frame["id"].astype(str).tolist()
    a = screening.screen_local(pq_path, ctx, part_rows=500).table
    b = screening.screen_local(frame, ctx, part_rows=500).table
    pd.testing.assert_frame_equal(a.drop(columns="line"), b.drop(columns="line"),
                                  check_exact=True)
