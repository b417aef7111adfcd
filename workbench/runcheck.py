"""Does a run folder still match its scenario and inputs?  (``workbench verify RUN``)

A run folder's ``provenance.json`` holds the SHA-256 of the scenario file, of every
input file and of every other file of the folder, and the whole scenario with its
defaults.  :func:`verify_run` compares them with the files as they are now:

* the outputs: a file edited or removed after the run;
* the scenario file: edited after the run (and which options now differ);
* each input: edited, replaced or not found where the run folder expects it;
* the workbench version that wrote the run and the one installed now.

The scenario and the inputs are looked for where a colleague who was handed the project
has them: the path relative to the run folder first (``from_run_folder``: a project
folder moved or unpacked elsewhere whole), then the absolute path of the run; a scenario
given with ``--scenario`` names the inputs itself, as a new run would read them.
docs/run_folder.md describes the run folder and the ways to share one.
"""
from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path

from . import __version__
from .errors import WorkbenchError

__all__ = ["RunRecordError", "Verification", "read_provenance", "verify_run",
           "option_differences", "flat_options", "folder_kind", "FOLDER_NAMES"]


class RunRecordError(WorkbenchError):
    """A folder that is not a finished run folder (no readable provenance.json)."""


def read_provenance(run) -> dict:
    """The provenance.json of run folder `run`, or one message saying what is wrong."""
    run = Path(run)
    path = run / "provenance.json"
    if not run.is_dir():
        raise RunRecordError(f"{run}: no such folder, expected a run folder written by "
                             "`workbench run`")
    if not path.is_file():
        raise RunRecordError(f"{run}: no provenance.json, so not a finished run folder "
                             "(`workbench run` writes it last)")
    try:
        prov = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise RunRecordError(f"{path}: not readable as JSON ({exc})") from exc
    if not isinstance(prov, dict) or "inputs" not in prov:
        raise RunRecordError(f"{path}: no 'inputs' record, expected the provenance.json "
                             "of `workbench run`")
    return prov


def folder_kind(run: Path, prov: dict) -> str:
    """``"run"``, ``"sensitivity"``, ``"grid"`` or ``"other"``: what wrote folder `run`
    (by the files its provenance.json lists, else those present): budget.csv
    (``workbench run``, the apps' "Export run folder"), sensitivity.csv (``workbench
    sensitivity``) or grid.nc (``workbench grid``)."""
    names = set(prov.get("outputs") or []) or {p.name for p in Path(run).iterdir()}
    for name, kind in (("budget.csv", "run"), ("sensitivity.csv", "sensitivity"),
                       ("grid.nc", "grid")):
        if name in names:
            return kind
    return "other"


#: What ``workbench verify`` calls each kind of folder (:func:`folder_kind`), and what a
#: new computation of its scenario is: ``(folder, computation)``.  A folder of no known
#: kind is checked as a run folder, as before.
FOLDER_NAMES = {"run": ("run folder", "a run"),
                "sensitivity": ("sensitivity folder", "a `workbench sensitivity`"),
                "grid": ("grid folder", "a `workbench grid` run"),
                "other": ("run folder", "a run")}


def flat_options(scenario: dict | None) -> dict:
    """The recorded scenario as ``section.key`` -> value, without ``[inputs]`` (whose
    files are compared by their checksums, wherever they lie).

    >>> flat_options({"inputs": {"air": "/a/air.csv"}, "budget": {"x": 1, "d": {"a": 2}}})
    {'budget.x': 1, 'budget.d.a': 2}
    """
    out = {}

    def walk(prefix, value):
        if isinstance(value, dict) and value:
            for k, v in value.items():
                walk(f"{prefix}.{k}" if prefix else str(k), v)
        else:
            out[prefix] = value
    for section, body in (scenario or {}).items():
        if section != "inputs":
            walk(section, body)
    return out


def option_differences(a: dict | None, b: dict | None) -> list[tuple[str, object, object]]:
    """``(key, value in a, value in b)`` of every option that differs between two
    recorded scenarios (:func:`flat_options`), in key order; a key missing on one side
    has the value None there."""
    fa, fb = flat_options(a), flat_options(b)
    missing = object()
    rows = []
    for key in sorted(set(fa) | set(fb)):
        va, vb = fa.get(key, missing), fb.get(key, missing)
        if _norm(va) != _norm(vb):
            rows.append((key, None if va is missing else va, None if vb is missing else vb))
    return rows


def _norm(value):
    """A recorded value in a form that compares equal across JSON round trips."""
    return json.dumps(value, sort_keys=True, default=str)


def show(value) -> str:
    """A recorded option value for a line of text."""
    if value is None:
        return "(not set)"
    return value if isinstance(value, str) else json.dumps(value, default=str)


class Lines:
    """An outcome told as lines of text (``lines``): printed by the command, shown by a
    notebook cell."""

    lines: list

    def text(self) -> str:
        return "\n".join(self.lines)

    def __str__(self) -> str:
        return self.text()

    def _repr_pretty_(self, p, cycle):      # a notebook cell shows the lines
        p.text(self.text())


@dataclass
class Verification(Lines):
    """The outcome of :func:`verify_run`: lines to print and whether all matches."""

    run: Path
    lines: list = field(default_factory=list)
    problems: list = field(default_factory=list)

    @property
    def ok(self) -> bool:
        """True when outputs, scenario and inputs are as at the run."""
        return not self.problems


def _candidates(record: dict, run: Path) -> list[Path]:
    """Where an input of the run may be now: relative to the run folder, then absolute."""
    places = []
    rel = record.get("from_run_folder")
    if rel:
        places.append((run / rel).resolve())
    if record.get("path"):
        places.append(Path(record["path"]))
    return list(dict.fromkeys(places))


def _find(record: dict, run: Path):
    """(found path or None, places looked at)."""
    places = _candidates(record, run)
    return next((p for p in places if p.exists()), None), places


def short_digest(digest) -> str:
    """The first 12 characters of a SHA-256, as the lines show it."""
    return str(digest)[:12]


def verify_run(run, scenario=None) -> Verification:
    """Compare run folder `run` with its scenario and inputs as they are now.

    Parameters
    ----------
    run : path
        A folder written by ``workbench run`` (or the apps' "Export run folder"),
        ``workbench sensitivity`` or ``workbench grid``: the lines name its kind
        (:func:`folder_kind`, "sensitivity folder ..."), from what its provenance.json
        lists.
    scenario : path, optional
        The scenario file to check against (default: the run's own, found relative to
        the run folder, then at its recorded absolute path).  Its ``[inputs]`` name the
        input files to check, as a run of it would read them.

    Returns
    -------
    Verification
        ``.ok`` is True when every output, the scenario and every input is as at the
        run; ``.lines`` say what was compared and what differs.

    Raises
    ------
    RunRecordError
        When `run` holds no readable provenance.json.
    """
    from .io.readbytes import gzip_content_sha256
    from .writers import sha256
    run = Path(run).resolve()
    prov = read_provenance(run)
    v = Verification(run)
    say, bad = v.lines.append, v.problems.append
    made = prov.get("version")
    kind = folder_kind(run, prov)           # what wrote it: named in every line below
    folder, again = FOLDER_NAMES[kind]
    say(f"{folder} {run}" + ("" if kind in ("run", "other") else
                             f" (written by `workbench {kind}`)"))
    say(f"  written {prov.get('run_finished_utc', '?')} by deposition workbench {made}"
        + ("" if made == __version__ else f" (this is {__version__}: a new run may differ)"))
    sites = prov.get("sites")
    if sites:               # an apps' export computes one site of its scenario's catalogue
        shown = ", ".join(sites[:8]) + (f" and {len(sites) - 8} more" if len(sites) > 8 else "")
        say(f"  sites {'analysed' if kind == 'sensitivity' else 'computed'}: {shown}")

    # ------------------------------------------------------------------ outputs
    sums = prov.get("output_sha256")
    if sums is None:
        say(f"outputs: not checked (this {folder} records no checksums of its files; "
            "those of this version do)")
    else:
        changed = []
        for name, digest in sums.items():
            p = run / name
            if not p.exists():
                changed.append(f"{name} is missing")
            elif sha256(p) != digest:
                changed.append(f"{name} was changed after the run")
        if changed:
            for c in changed:
                bad(f"output {c}")
            say(f"outputs: {len(changed)} of {len(sums)} files differ from the run: "
                + "; ".join(changed))
        else:
            # provenance.json holds the checksums of the others: "run" wrote one more
            say(f"outputs: the {len(sums)} files besides provenance.json are as written"
                if len(sums) != 1 else
                f"outputs: the 1 file besides provenance.json ({next(iter(sums))}) is as "
                "written")

    # ------------------------------------------------------------------ scenario
    records = prov["inputs"]
    sc_rec = records.get("scenario", {})
    loaded = None
    if scenario is not None:
        sc_path, places = Path(scenario).resolve(), [Path(scenario).resolve()]
        sc_path = sc_path if sc_path.is_file() else None
    else:
        sc_path, places = _find(sc_rec, run) if sc_rec else (None, [])
    if sc_path is None and not sc_rec and scenario is None:
        say("scenario: no file recorded (a run exported from the apps: its options are "
            "the scenario in provenance.json; --scenario FILE compares them with a file)")
    elif sc_path is None:
        bad("scenario not found")
        say(f"scenario: not found (looked at {' or '.join(str(p) for p in places)}); "
            "name it with --scenario FILE")
    else:
        same = sc_rec.get("sha256") == sha256(sc_path)
        if not sc_rec:                   # an apps' export: its options are the record
            say(f"scenario: {sc_path}: compared by its options (the run records no "
                "scenario file)")
        else:
            say(f"scenario: {sc_path}: " + ("as at the run" if same else
                f"differs from the run (sha256 {short_digest(sc_rec.get('sha256'))} at the "
                f"run, {short_digest(sha256(sc_path))} now)"))
        if not same and sc_rec:
            bad("scenario changed")
        try:
            from .scenario import load_scenario
            loaded = load_scenario(sc_path, require_inputs=False)   # inputs: below
        except WorkbenchError as exc:
            say(f"  it does not load now: {exc}")
            if same:
                bad("scenario does not load")
        if loaded is not None:
            overrides = prov.get("command_line_overrides") or {}
            diffs = option_differences(prov.get("scenario"), _recorded_form(loaded))
            for key, was, now in diffs:
                if key in overrides and _norm(overrides[key]) == _norm(was):
                    say(f"  option {key}: {show(was)} at the run, set on the command line "
                        f"(the scenario says {show(now)}; run it again the same way)")
                    continue
                say(f"  option {key}: {show(was)} at the run, {show(now)} now")
                bad(f"option {key}")

    # ------------------------------------------------------------------ inputs
    # a `workbench grid` run reads the files of the scenario's [grid] section, a site
    # run (or an apps' export) those of its [inputs]
    grid_run = kind == "grid"
    now = None
    if loaded is not None:
        if grid_run:
            from .grid_output import grid_paths
            now = grid_paths(loaded)
        else:
            now = loaded.input_paths()
    section = "[grid]" if grid_run else "[inputs]"
    for role, rec in records.items():
        if role == "scenario":
            continue
        name = rec.get("in_scenario_folder") or Path(rec.get("path", role)).name
        if now is not None:
            p = now.get(role)
            found, looked = (p if p is not None and p.exists() else None), [p]
            if p is None:
                bad(f"input {role} not in the scenario")
                say(f"input {role} ({name}): the scenario's {section} names no {role} "
                    "file now")
                continue
        else:
            found, looked = _find(rec, run)
        if rec.get("changed_after_read"):
            bad(f"input {role} changed during the run")
            say(f"input {role} ({name}): changed after the run read it (provenance.json): "
                "the run's checksum is not of the file its numbers come from")
            continue
        if found is None:
            bad(f"input {role} not found")
            say(f"input {role} ({name}): not found (looked at "
                + " or ".join(str(p) for p in looked if p is not None) + ")")
        elif sha256(found) == rec.get("sha256"):
            say(f"input {role} ({name}): as at the run")
        elif rec.get("content_sha256") and \
                gzip_content_sha256(found) == rec["content_sha256"]:
            say(f"input {role} ({name}): as at the run (compressed again: other bytes, "
                "the same content; content_sha256)")
        else:
            bad(f"input {role} changed")
            now_content = gzip_content_sha256(found)
            if rec.get("content_sha256") and now_content is not None:
                said = (f"content sha256 {short_digest(rec['content_sha256'])} at the run, "
                        f"{short_digest(now_content)} now")
            else:
                said = (f"sha256 {short_digest(rec.get('sha256'))} at the run, "
                        f"{short_digest(sha256(found))} now")
            if now_content is not None and not rec.get("content_sha256"):
                said += ("; the run records the checksum of the compressed bytes only, so a "
                         "file compressed again cannot be told from an edited one")
            say(f"input {role} ({name}): {found} differs from the run ({said})")
    if now is not None:
        for role in now:
            if role not in records:
                bad(f"input {role} added")
                say(f"input {role}: named by the scenario now, not used by the run")
    say("result: " + (f"the {folder} matches its scenario and inputs" if v.ok else
                      f"{len(v.problems)} difference(s): {again} of the scenario now "
                      "would not reproduce this folder" if not any(p.startswith("output")
                                                                  for p in v.problems)
                      else f"{len(v.problems)} difference(s), some in the {folder} "
                      "itself"))
    return v


def _recorded_form(sc) -> dict:
    """Scenario `sc` as provenance.json records one (every default filled in)."""
    return json.loads(json.dumps(sc.resolved(), default=str))
