"""Failure paths at the edges of the program: full disks and file-size limits, signals,
two runs at once, special input files, outputs that are folders, hostile names, CSV
formula injection, read-only outputs, models too large (docs/validation.md, "Failure
paths").

What each test expects comes from the operating system's documented behaviour
(setrlimit(2), signal(7), fifo(7), rename(2)) and from the program's own promise in
docs/results.md and the rules of the project: bad input exits 2, an output that cannot
be written exits 3, nothing the user had is lost, no traceback.
"""

from __future__ import annotations

import csv
import os
import resource
import signal
import stat
import subprocess
import sys
import time
from pathlib import Path

import openpyxl
import pandas as pd
import pytest
from click.testing import CliRunner

from conftest import DATA
from steamnet import load_model, solve_cases
from steamnet.cli import EXIT_INPUT, EXIT_OUTPUT, main
from steamnet.errors import ModelError
from steamnet.io.atomic import OutputError
from steamnet.io.jsonout import write_json
from steamnet.workbook import write_csv_folder, write_workbook
from steamnet.workbook.columns import Column
from steamnet.workbook.csvout import csv_value
from steamnet.workbook.writer import build_tables

# (steamnet.io.readfile, remove_stale and csv_file_of_ours are imported in the tests
# that use them, so that the other tests also run, and fail, on code without them)

ONE = DATA / "one_header.toml"          # the smallest plant: a report takes about 2 s


def cli(*args, timeout=120, limit_fsize=None, env=None):
    """Run ``steamnet ARGS`` in a fresh process (optionally under RLIMIT_FSIZE)."""
    def pre():
        if limit_fsize is not None:
            resource.setrlimit(resource.RLIMIT_FSIZE, (limit_fsize, limit_fsize))
        # a safety net for the special-file tests run against older code: a reader
        # that never stops fails with MemoryError instead of taking the machine
        resource.setrlimit(resource.RLIMIT_AS, (3 * 2**30, 3 * 2**30))
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *map(str, args)],
                          capture_output=True, text=True, timeout=timeout,
                          preexec_fn=pre, env=env)


def hidden(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.startswith("."))


def snapshot(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir()) if p.is_file()}


@pytest.fixture(scope="module")
def small_study():
    return solve_cases(load_model(ONE))


# ------------------------------------------------- 1. a workbook write that fails
@pytest.mark.parametrize("limit", [4_000, 12_000, 30_000])
def test_workbook_write_over_the_file_size_limit_exits_3_and_keeps_the_old_file(
        tmp_path, limit):
    # setrlimit(2): a write beyond RLIMIT_FSIZE fails with EFBIG (Python ignores
    # SIGXFSZ). Limits below the workbook's size (about 48 kB) fail it at different
    # points: the streamed sheets, the zip members, the zip's central directory.
    out = tmp_path / "r.xlsx"
    out.write_bytes(b"previous results")
    scratch = tmp_path / "scratch"            # where openpyxl streams its sheets
    scratch.mkdir()
    env = {**os.environ, "TMPDIR": str(scratch)}
    r = cli("report", ONE, "--out", out, "--studies", "none", limit_fsize=limit, env=env)
    assert r.returncode == EXIT_OUTPUT, r.stderr
    assert "could not write" in r.stderr and "File too large" in r.stderr
    assert "Traceback" not in r.stderr and "Exception ignored" not in r.stderr
    assert out.read_bytes() == b"previous results"
    assert hidden(tmp_path) == [] and list(scratch.iterdir()) == []


def test_a_disk_full_during_the_zip_save_is_an_output_error(tmp_path, small_study,
                                                             monkeypatch):
    # ENOSPC from the zip writer itself (not from openpyxl's streamed sheets)
    import zipfile
    real = zipfile.ZipFile.writestr
    calls = {"n": 0}

    def full_after_three(self, *a, **k):
        calls["n"] += 1
        if calls["n"] > 3:
            raise OSError(28, "No space left on device")
        return real(self, *a, **k)
    monkeypatch.setattr(zipfile.ZipFile, "writestr", full_after_three)
    out = tmp_path / "r.xlsx"
    out.write_bytes(b"previous")
    with pytest.raises(OutputError, match="could not write .No space left on device"):
        write_workbook(out, small_study)
    assert out.read_bytes() == b"previous" and hidden(tmp_path) == []


# ---------------------------------------------------------------------- 2. signals
def _run_until(tmp_path: Path, moment: str, sig: int, extra=()):
    """Start a report and send ``sig`` at ``moment``: 'start' (0.3 s in: loading,
    solving), 'workbook' (its temporary file has appeared), 'csv' (the temporary CSV
    folder has appeared)."""
    out, folder = tmp_path / "r.xlsx", tmp_path / "csv"
    p = subprocess.Popen([sys.executable, "-m", "steamnet.cli", "report", str(ONE),
                          "--out", str(out), "--csv", str(folder), *extra],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    want = {"workbook": ".r.xlsx.", "csv": ".csv."}.get(moment)
    t0 = time.monotonic()
    while p.poll() is None:
        if want is None and time.monotonic() - t0 > 0.3:
            break
        if want is not None and any(n.startswith(want) for n in os.listdir(tmp_path)):
            break
        time.sleep(0.0005)
    assert p.poll() is None, f"the run ended before the moment '{moment}'"
    p.send_signal(sig)
    _, err = p.communicate(timeout=60)
    return p.returncode, err


@pytest.fixture()
def previous(tmp_path, small_study):
    """Outputs of an earlier complete run (without studies), written in this process."""
    write_workbook(tmp_path / "r.xlsx", small_study)
    write_csv_folder(tmp_path / "csv", small_study)
    return (tmp_path / "r.xlsx").read_bytes(), snapshot(tmp_path / "csv")


@pytest.mark.parametrize("moment", ["start", "workbook", "csv"])
def test_sigterm_keeps_nothing_half_written(tmp_path, previous, moment):
    book, tables = previous
    code, err = _run_until(tmp_path, moment, signal.SIGTERM)
    if moment == "start" and code == -signal.SIGTERM:
        pass    # Python was still starting (the handler comes with the command): no file
    else:
        assert code == 128 + signal.SIGTERM, err      # handled, not killed
        assert "terminated by SIGTERM: nothing half-written was kept" in err
    assert "Traceback" not in err
    assert hidden(tmp_path) == []
    if moment == "csv":          # the workbook was complete before the CSV began
        openpyxl.load_workbook(tmp_path / "r.xlsx")
    else:
        assert (tmp_path / "r.xlsx").read_bytes() == book
    assert snapshot(tmp_path / "csv") == tables


@pytest.mark.parametrize("moment", ["workbook", "csv"])
def test_after_sigkill_the_next_run_removes_what_was_left(tmp_path, previous, moment):
    book, tables = previous
    code, _ = _run_until(tmp_path, moment, signal.SIGKILL)
    assert code == -signal.SIGKILL
    left = hidden(tmp_path)
    assert left, "a killed run leaves its temporary file (nothing can remove it)"
    if moment == "workbook":
        assert (tmp_path / "r.xlsx").read_bytes() == book
    assert snapshot(tmp_path / "csv") == tables
    r = CliRunner().invoke(main, ["report", str(ONE), "--out", str(tmp_path / "r.xlsx"),
                                  "--csv", str(tmp_path / "csv"), "--studies", "none",
                                  "--quiet"])          # the second run, in this process
    assert r.exit_code == 0, r.output
    assert hidden(tmp_path) == []
    openpyxl.load_workbook(tmp_path / "r.xlsx")


def test_stale_files_of_running_processes_and_of_others_are_kept(tmp_path):
    from steamnet.io.atomic import remove_stale, temp_prefix
    target = tmp_path / "r.xlsx"
    mine = tmp_path / (temp_prefix(target) + "abc.xlsx")          # this process runs
    init = tmp_path / (temp_prefix(target).replace(f"-{os.getpid()}.", "-1.") + "x.xlsx")
    other_program = tmp_path / ".r.xlsx.abcd1234.xlsx"            # not our prefix
    other_output = tmp_path / (temp_prefix(tmp_path / "s.xlsx")
                               .replace(f"-{os.getpid()}.", "-999999999.") + "x.xlsx")
    dead = tmp_path / (temp_prefix(target).replace(f"-{os.getpid()}.", "-999999999.")
                       + "x.xlsx")
    for f in (mine, init, other_program, other_output, dead):
        f.write_text("x")
    assert remove_stale(target) == [dead.name]            # pid 999999999 cannot run
    assert sorted(hidden(tmp_path)) == sorted(
        f.name for f in (mine, init, other_program, other_output))


# ------------------------------------------------------- 3. the CSV folder as a whole
def _study_frame():
    return pd.DataFrame({"header": ["HP"], "headroom_t_h": [1.5]})


def test_a_second_run_with_fewer_studies_leaves_no_stale_csv(tmp_path, small_study):
    folder = tmp_path / "csv"
    folder.mkdir()
    (folder / "notes.txt").write_text("mine")              # not ours: kept
    write_csv_folder(folder, small_study, studies={"Headroom": _study_frame()})
    assert (folder / "study_headroom.csv").exists()
    written = write_csv_folder(folder, small_study)
    assert sorted(p.name for p in folder.iterdir()) == sorted(
        [p.name for p in written] + ["notes.txt"])
    assert not (folder / "study_headroom.csv").exists()
    assert (folder / "notes.txt").read_text() == "mine"
    assert hidden(tmp_path) == []


def test_a_failed_csv_write_keeps_the_previous_folder(tmp_path, small_study, monkeypatch):
    folder = tmp_path / "csv"
    write_csv_folder(folder, small_study, studies={"Headroom": _study_frame()})
    before = snapshot(folder)
    import steamnet.workbook.csvout as csvout
    real, n = csvout._write_table, {"k": 0}

    def full_at_the_fourth(path, table):
        n["k"] += 1
        if n["k"] == 4:
            raise OutputError(f"{path}: could not write (No space left on device)")
        real(path, table)
    monkeypatch.setattr(csvout, "_write_table", full_at_the_fourth)
    with pytest.raises(OutputError):
        write_csv_folder(folder, small_study)
    assert snapshot(folder) == before and hidden(tmp_path) == []


def test_a_csv_folder_holding_a_subfolder_is_refused_unchanged(tmp_path, small_study):
    folder = tmp_path / "csv"
    (folder / "mine").mkdir(parents=True)
    with pytest.raises(OutputError, match="not a file this program writes"):
        write_csv_folder(folder, small_study)
    assert [p.name for p in folder.iterdir()] == ["mine"] and hidden(tmp_path) == []


def test_every_csv_file_written_is_recognised_as_ours(small_study):
    # the names the folder swap replaces must be those build_tables makes
    from steamnet.workbook.csvout import csv_file_of_ours
    from steamnet.workbook.run import Run
    run = Run(small_study, None, None, {"Trip screening": _study_frame(),
                                        "Marginal steam cost": _study_frame()})
    slugs = ["run"] + [t.slug for t in build_tables(run, for_csv=True)]
    assert all(csv_file_of_ours(f"{s}.csv") for s in slugs)
    assert not csv_file_of_ours("notes.csv") and not csv_file_of_ours("headers.csv.bak")


def test_two_reports_at_once_leave_one_whole_run(tmp_path):
    out, folder = tmp_path / "r.xlsx", tmp_path / "csv"
    base = [sys.executable, "-m", "steamnet.cli", "report", str(ONE), "--out", str(out),
            "--csv", str(folder), "--quiet"]
    runs = [subprocess.Popen(base + ["--studies", s], stdout=subprocess.PIPE,
                             stderr=subprocess.PIPE, text=True) for s in ("all", "none")]
    results = [(p.wait(timeout=120), p.stderr.read()) for p in runs]
    for p in runs:
        p.stdout.close()
        p.stderr.close()
    assert [c for c, _ in results] == [0, 0], results
    names = {p.name for p in folder.iterdir()}
    studies = {n for n in names if n.startswith("study_")}
    # either run's complete set: three studies, or none (never some of one run)
    assert studies in (set(), {"study_trip_screening.csv", "study_trip_findings.csv",
                               "study_headroom.csv",
                               "study_marginal_steam_cost.csv"})
    assert {"run.csv", "headers.csv", "inputs.csv"} <= names
    openpyxl.load_workbook(out)
    assert hidden(tmp_path) == []


# ---------------------------------------------------------------- 4. special files
def test_a_named_pipe_is_refused_at_once(tmp_path):
    fifo = tmp_path / "fifo.toml"
    os.mkfifo(fifo)                       # fifo(7): opening it for reading waits
    r = cli("check", fifo, timeout=60)    # for a writer, unless O_NONBLOCK
    assert r.returncode == EXIT_INPUT, r.stderr
    assert "is a named pipe, not a regular file" in r.stderr and str(fifo) in r.stderr


def test_dev_zero_is_refused_at_once():
    r = cli("check", "/dev/zero", timeout=60)
    assert r.returncode == EXIT_INPUT, r.stderr
    assert "/dev/zero: is a character device, not a regular file" in r.stderr


def test_a_case_table_that_is_a_pipe_is_refused(tmp_path):
    fifo = tmp_path / "table.csv"
    os.mkfifo(fifo)
    r = cli("cases", ONE, fifo, timeout=60)
    assert r.returncode == EXIT_INPUT, r.stderr
    assert "is a named pipe" in r.stderr and "case table" in r.stderr


CAP = 64 * 2**20          # the cap docs/validation.md states


def test_a_file_over_the_size_cap_is_refused_naming_the_cap(tmp_path):
    big = tmp_path / "big.toml"
    with open(big, "wb") as f:            # a sparse file: no disk used
        f.truncate(CAP + 1)
    r = CliRunner().invoke(main, ["check", str(big)])
    assert r.exit_code == EXIT_INPUT, r.output
    assert "is 64.0 MB; a model file is read up to 64 MB" in r.output
    table = tmp_path / "big.csv"
    with open(table, "wb") as f:
        f.truncate(CAP + 1)
    r = CliRunner().invoke(main, ["cases", str(ONE), str(table)])
    assert r.exit_code == EXIT_INPUT and "a case table is read up to 64 MB" in r.output


# ---------------------------------------------------------- 5. outputs that are folders
def test_out_that_is_a_folder_exits_3_with_our_message(tmp_path):
    (tmp_path / "r.xlsx").mkdir()
    runner = CliRunner()
    r = runner.invoke(main, ["report", str(ONE), "--out", str(tmp_path / "r.xlsx"),
                             "--studies", "none", "--quiet"])
    assert r.exit_code == EXIT_OUTPUT, r.output
    assert "r.xlsx: is a folder, not a file name" in r.output
    r = runner.invoke(main, ["solve", str(ONE), "--json", str(tmp_path / "r.xlsx"),
                             "--quiet"])
    assert r.exit_code == EXIT_OUTPUT and "is a folder" in r.output
    (tmp_path / "csvfile").write_text("keep")
    r = runner.invoke(main, ["report", str(ONE), "--out", str(tmp_path / "ok.xlsx"),
                             "--csv", str(tmp_path / "csvfile"), "--studies", "none",
                             "--quiet"])
    assert r.exit_code == EXIT_OUTPUT and "is a file, not a folder" in r.output
    assert (tmp_path / "csvfile").read_text() == "keep"


# --------------------------------------------------------------------- 6. names
# (as written in TOML, as the message must show it)
_HOSTILE = [("U1\\n", "U1\\n"),                         # a trailing line break
            ("U1\\nerror: forged", "U1\\nerror: forged"),
            ("U1\\u001b[2J", "U1\\x1b[2J"),               # a terminal escape
            ("U1\\u202e", "U1\\u202e")]                   # a right-to-left override


@pytest.mark.parametrize("written,shown", _HOSTILE)
def test_a_name_with_control_characters_is_refused_and_shown_escaped(tmp_path, written,
                                                                      shown):
    text = ONE.read_text(encoding="utf-8").replace('name = "U1"', f'name = "{written}"')
    path = tmp_path / "m.toml"
    path.write_text(text, encoding="utf-8")
    r = CliRunner().invoke(main, ["check", str(path)], color=True)   # as on a terminal
    assert r.exit_code == EXIT_INPUT, r.output
    lines = r.output.splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: ")   # no forged second line
    assert shown in lines[0]
    assert not any(ch in r.output for ch in "\x1b\u202e")


def test_a_control_character_reaching_a_message_from_elsewhere_is_escaped(tmp_path):
    # an unknown top-level key is not a name the schema validates
    text = '"x\\nerror: forged" = 1\n' + ONE.read_text(encoding="utf-8")
    path = tmp_path / "m.toml"
    path.write_text(text, encoding="utf-8")
    r = CliRunner().invoke(main, ["check", str(path)])
    assert r.exit_code == EXIT_INPUT
    assert r.output.count("\n") == 1 and "x\\nerror: forged" in r.output


def test_a_case_table_name_with_a_control_character_is_refused(tmp_path):
    table = tmp_path / "t.csv"
    table.write_text('case,user.U1.demand [t/h]\n"a\x1bb",20\n', encoding="utf-8")
    r = CliRunner().invoke(main, ["cases", str(ONE), str(table), "--quiet"])
    assert r.exit_code == EXIT_INPUT, r.output
    assert "a\\x1bb" in r.output and "\x1b" not in r.output
    assert "row 2" in r.output and "field 'case'" in r.output


# ------------------------------------------------------ 7. CSV formula injection
# OWASP, "CSV Injection": cells beginning with = + - @, tab or carriage return are
# read as formulas by spreadsheets; a blank before the sign does not stop them.
@pytest.mark.parametrize("text", [" =1+1", "\t=1+1", "\r=1+1", "  +A1", " \t-2+3",
                                  "\n@SUM(A1)", "\tplain", "\rplain", "=1+1"])
def test_csv_text_that_a_spreadsheet_reads_as_a_formula_is_quoted(text):
    assert csv_value(Column("note", "Note", "text"), text) == "'" + text


@pytest.mark.parametrize("text", ["plain", " plain", "1-2", "a=b", "", "e-mail"])
def test_csv_text_that_is_no_formula_is_left_alone(text):
    assert csv_value(Column("note", "Note", "text"), text) == text


def test_csv_files_quote_formulas_after_leading_blanks(tmp_path, small_study):
    df = pd.DataFrame({"note": [" =HYPERLINK(\"x\")", "\t+1", "ok"], "v_t_h": [1, 2, 3]})
    write_csv_folder(tmp_path / "csv", small_study, studies={"Notes": df})
    with open(tmp_path / "csv" / "study_notes.csv", newline="", encoding="utf-8") as f:
        cells = [row[0] for row in csv.reader(f)][1:]
    assert cells == ["' =HYPERLINK(\"x\")", "'\t+1", "ok"]


# ------------------------------------------------------------- 8. read-only outputs
def test_a_read_only_workbook_is_refused_and_kept(tmp_path, small_study):
    # Rule (docs/validation.md): a file whose owner-write bit is off is refused even
    # where the user could write it anyway (root).
    out = tmp_path / "r.xlsx"
    out.write_bytes(b"keep me")
    out.chmod(0o444)
    with pytest.raises(OutputError, match="read-only .mode 444."):
        write_workbook(out, small_study)
    assert out.read_bytes() == b"keep me" and hidden(tmp_path) == []
    r = CliRunner().invoke(main, ["report", str(ONE), "--out", str(out), "--studies",
                                  "none", "--quiet"])
    assert r.exit_code == EXIT_OUTPUT and "read-only" in r.output
    assert out.read_bytes() == b"keep me"
    assert stat.S_IMODE(out.stat().st_mode) == 0o444


def test_a_writable_output_keeps_its_mode(tmp_path, small_study):
    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    for f in (out, js):
        f.write_bytes(b"old")
        f.chmod(0o640)
    write_workbook(out, small_study)
    write_json(small_study, js)
    assert stat.S_IMODE(out.stat().st_mode) == 0o640 and out.read_bytes() != b"old"
    assert stat.S_IMODE(js.stat().st_mode) == 0o640 and js.read_bytes() != b"old"


def test_read_only_json_and_csv_are_refused_and_kept(tmp_path, small_study):
    js = tmp_path / "r.json"
    js.write_text("{}")
    js.chmod(0o400)
    with pytest.raises(OutputError, match="read-only"):
        write_json(small_study, js)
    assert js.read_text() == "{}"
    folder = tmp_path / "csv"
    write_csv_folder(folder, small_study)
    (folder / "headers.csv").chmod(0o444)
    before = snapshot(folder)
    with pytest.raises(OutputError, match="headers.csv: is read-only"):
        write_csv_folder(folder, small_study)
    assert snapshot(folder) == before and hidden(tmp_path) == []
    (folder / "headers.csv").chmod(0o644)
    folder.chmod(0o555)
    try:
        with pytest.raises(OutputError, match="csv: the folder is read-only"):
            write_csv_folder(folder, small_study)
        assert snapshot(folder) == before and hidden(tmp_path) == []
    finally:
        folder.chmod(0o755)


# ------------------------------------------------------------------ 9. model size
def test_a_model_over_the_item_cap_is_refused_before_validation(tmp_path, monkeypatch):
    # the cap is read at call time; a small one keeps the test quick (the figures of
    # the real cap are measured by benchmarks/bench_model_size.py)
    from steamnet.io import readfile
    monkeypatch.setattr(readfile, "MAX_MODEL_ITEMS", 5)
    users = "".join(f'[[user]]\nname = "X{i}"\nheader = "HP"\ndemand = "1 t/h"\n'
                    for i in range(2))
    path = tmp_path / "m.toml"
    path.write_text(ONE.read_text(encoding="utf-8") + users, encoding="utf-8")
    with pytest.raises(ModelError, match=r"6 items: .* up to 5 items"):
        load_model(path)
    monkeypatch.setattr(readfile, "MAX_MODEL_ITEMS", 6)
    assert len(load_model(path).table("user")) == 3


def test_the_caps_are_the_documented_ones():
    from steamnet.io import readfile
    assert readfile.MAX_INPUT_BYTES == CAP
    doc = (Path(__file__).resolve().parents[1] / "docs" / "validation.md").read_text(
        encoding="utf-8")
    assert f"{readfile.MAX_MODEL_ITEMS:,} items" in doc


def test_a_signal_within_a_deferred_step_is_raised_when_the_step_ends():
    # signal(7): the handler runs in the main thread between bytecodes; here it only
    # notes the signal until the step is done
    from steamnet.io.signals import Terminated, signals_deferred, termination_as_interrupt
    done, before = [], signal.getsignal(signal.SIGTERM)
    with termination_as_interrupt():
        with pytest.raises(Terminated) as exc:
            with signals_deferred():
                os.kill(os.getpid(), signal.SIGTERM)
                for _ in range(1000):          # bytecodes for the handler to run on
                    pass
                done.append("the step ran to its end")
    assert done and exc.value.code == 128 + signal.SIGTERM
    assert signal.getsignal(signal.SIGTERM) is before       # the previous handler is back


def test_temporary_files_noted_are_removed_after_an_interruption(tmp_path):
    from steamnet.io.atomic import make_temp, remove_own_temps
    fd, f = make_temp(prefix=".x.", dir=tmp_path)
    os.close(fd)
    d = make_temp(folder=True, prefix=".y.", dir=tmp_path)
    (Path(d) / "part.csv").write_text("half")
    remove_own_temps()
    assert hidden(tmp_path) == []
