"""The sample desk: create samples, add a level by form, upload a levels or measured-lines file (preview, then commit).

Every form carries a CSRF token (Flask-WTF). Field problems are shown beside
their field; an upload is parsed and validated in full, every problem listed,
before anything is written; the file waits on the server between preview and
commit (in the staging folder, named by a random id inside a signed, timed
token) and is written as one transaction by the catalog.

An upload's kind is read from its header as ``levels import`` reads it
(:func:`levels.service.imports.detect_file_kind`: ``wavelength_nm`` makes a
measured-lines file, anything else a levels file). Two kinds the desk does not
import are named instead of being read as a levels file with unknown columns: a
peaks file (``peak_nm``, as ``levels peaks`` writes it) and a measured spectrum
(``wavelength_nm`` or ``pixel`` with ``intensity`` only); the answer says which
command or page takes it.

When the site has an API token, the desk asks for it once per browser session
(the desk writes to the store like the API does).
"""

from __future__ import annotations

import hashlib
import hmac
import os
import secrets
import time
from collections.abc import Sequence
from pathlib import Path

from flask import (
    Blueprint,
    abort,
    current_app,
    flash,
    redirect,
    render_template,
    request,
    session,
    url_for,
)
from itsdangerous import BadSignature, SignatureExpired, URLSafeTimedSerializer
from werkzeug.utils import secure_filename

from levels.errors import (
    AlreadyExistsError,
    InputFileError,
    NotFoundError,
    PhysicsInputError,
    Problem,
    StoreError,
    UnitError,
)
from levels.io.limits import automatic_dataset_name_problem, text_problem
from levels.io.records import LevelRecord, LineRecord, validate_level
from levels.io.tables import read_delimited
from levels.service.contract import SAMPLE_CONDITION_FIELDS
from levels.service.imports import detect_file_kind
from levels.service.line_preview import check_line_file
from levels.units import parse_quantity

from webui import services
from webui.downloads import table_download

bp = Blueprint("edit", __name__, url_prefix="/desk")

LEVEL_FORM_FIELDS = ("spectrum", "configuration", "term", "j", "energy_cm1", "unc_cm1", "label", "parity",
                     "lifetime_s", "lande_g")
NEW_DATASET = "__new__"
#: rows of a valid upload shown in the preview table (all are counted and validated)
PREVIEW_ROWS = 500
FORM_SOURCE = "web form"
SAMPLE_COLUMNS = ("name",) + SAMPLE_CONDITION_FIELDS + ("created_at", "datasets")
SAMPLE_UNITS = {"pressure_pa": "Pa", "current_a": "A", "te_k": "K", "ne_m3": "m-3", "tgas_k": "K",
                "path_length_m": "m"}


# ----------------------------------------------------------------- desk lock

def _secret_key() -> str | bytes:
    """The site's secret key (``create_app`` always sets one, a random one when none is configured)."""
    key = current_app.secret_key
    if key is None:  # the TypeError hmac and itsdangerous would raise for a missing key, with its reason
        raise TypeError("the web site has no SECRET_KEY")
    return key


def _token_digest(token: str) -> str:
    key = _secret_key()
    return hmac.new(key.encode() if isinstance(key, str) else key, token.encode(), hashlib.sha256).hexdigest()


def desk_locked() -> bool:
    """Whether this browser session must give the API token before using the desk."""
    token = current_app.config.get("LEVELS_API_TOKEN")
    if not token or not current_app.config.get("LEVELS_DESK_NEEDS_TOKEN", True):
        return False
    return session.get("desk_key") != _token_digest(token)


@bp.before_request
def _require_unlock():
    if request.endpoint in ("edit.unlock",):
        return None
    if desk_locked():
        return redirect(url_for("edit.unlock", next=request.path), code=303)
    return None


@bp.route("/unlock", methods=["GET", "POST"])
def unlock():
    """Give the site's API token to open the desk for this browser session."""
    error = None
    if request.method == "POST":
        given = request.form.get("token", "")
        token = current_app.config.get("LEVELS_API_TOKEN") or ""
        if token and hmac.compare_digest(given.encode(), token.encode()):
            session["desk_key"] = _token_digest(token)
            target = request.args.get("next", "")
            if not target.startswith("/desk") or "//" in target or "\\" in target:
                target = url_for("edit.desk")
            return redirect(target, code=303)
        error = "That is not this site's token."
    return render_template("unlock.html", error=error), 401 if error else 200


# ----------------------------------------------------------------- page

def _desk(status: int = 200, **context):
    cat = services.catalog()
    context.setdefault("sample_errors", {})
    context.setdefault("sample_values", {})
    context.setdefault("level_errors", {})
    context.setdefault("level_values", {})
    context.setdefault("level_notes", [])
    context.setdefault("upload_errors", {})
    return render_template("desk.html", samples=cat.sample_rows(), targets=services.writable_datasets(cat),
                           new_dataset=NEW_DATASET, **context), status


@bp.get("/")
def desk():
    """The desk: samples, the level form, the upload form."""
    return _desk()


# ----------------------------------------------------------------- samples

_QUANTITY_FIELDS = {
    # form field: (store field, dimension, default unit, lower bound (exclusive unless 0 allowed), upper bound, label)
    "pressure": ("pressure_pa", "pressure", "Pa", 0.0, 1e12, True),
    "te": ("te_k", "temperature", "K", 0.0, 1e12, False),
    "ne": ("ne_m3", "density", "m-3", 0.0, 1e40, False),
    "tgas": ("tgas_k", "temperature", "K", 0.0, 1e12, False),
    "path_length": ("path_length_m", "length", "m", 0.0, 1e6, False),
}
_TEXT_FIELDS = {"description": 2000, "gas_fill": 200, "instrument": 200}


def parse_sample_form(form) -> tuple[str, dict, dict]:
    """Name, conditions (store units) and field problems of the sample form."""
    errors: dict[str, str] = {}
    name = (form.get("name") or "").strip()
    if not name:
        errors["name"] = "a sample name is required"
    elif len(name) > 200:
        errors["name"] = "at most 200 characters"
    elif text_problem(name, 200):
        errors["name"] = f"the name {text_problem(name, 200)}"
    conditions: dict[str, object] = {}
    for field_name, limit in _TEXT_FIELDS.items():
        text = (form.get(field_name) or "").strip()
        if len(text) > limit:
            errors[field_name] = f"at most {limit} characters"
        elif text_problem(text, limit, multiline=field_name == "description"):
            errors[field_name] = f"the text {text_problem(text, limit, multiline=field_name == 'description')}"
        elif text:
            conditions[field_name] = text
    for field_name, (store, dimension, unit, low, high, zero_ok) in _QUANTITY_FIELDS.items():
        text = (form.get(field_name) or "").strip()
        if not text:
            continue
        try:
            value = parse_quantity(text, dimension, default_unit=unit)
        except UnitError as exc:
            errors[field_name] = str(exc)
            continue
        if value < low or (value == low and not zero_ok):
            errors[field_name] = f"{text!r} must be {'zero or more' if zero_ok else 'greater than zero'}"
        elif value >= high:
            errors[field_name] = f"{text!r} is above the largest accepted value ({high:g} {unit})"
        else:
            conditions[store] = value
    current = (form.get("current_a") or "").strip()
    if current:
        try:
            value = float(current)
            if value != value or abs(value) == float("inf"):
                raise ValueError
            conditions["current_a"] = value
        except ValueError:
            errors["current_a"] = f"{current!r} is not a number of amperes"
    return name, conditions, errors


@bp.post("/samples")
def create_sample():
    """Create a sample with its conditions."""
    name, conditions, errors = parse_sample_form(request.form)
    values = request.form.to_dict()
    if errors:
        return _desk(400, sample_errors=errors, sample_values=values)
    try:
        services.catalog().create_sample(name, **conditions)
    except AlreadyExistsError as exc:
        return _desk(400, sample_errors={"name": str(exc)}, sample_values=values)
    except InputFileError as exc:
        return _desk(400, sample_errors={p.field or "name": p.message for p in exc.problems}, sample_values=values)
    except StoreError as exc:
        return _desk(400, sample_errors={"_form": str(exc)}, sample_values=values)
    services.forget_species()
    flash(f"Sample {name!r} created.", "ok")
    return redirect(url_for("edit.desk") + "#samples", code=303)


@bp.get("/samples.<any(csv, json, ecsv):fmt>")
def samples_download(fmt: str):
    """The samples table as CSV, JSON or ECSV."""
    cat = services.catalog()
    rows = [{**s, "datasets": "; ".join(s["datasets"])} for s in cat.sample_rows()]
    return table_download(rows, SAMPLE_COLUMNS, fmt, cat.provenance("samples"), "samples", SAMPLE_UNITS)


# ----------------------------------------------------------------- one level

def _problems_by_field(problems: list[Problem], known: tuple[str, ...]) -> tuple[dict, list]:
    by_field: dict[str, list[str]] = {}
    general: list[str] = []
    for problem in problems:
        if problem.field in known:
            by_field.setdefault(problem.field, []).append(problem.message)
        else:
            general.append(f"{problem.field}: {problem.message}" if problem.field else problem.message)
    return {k: "; ".join(v) for k, v in by_field.items()}, general


@bp.post("/levels")
def add_level():
    """Add one level, validated field by field, to a dataset (an existing one or a new one)."""
    form = request.form
    values = form.to_dict()
    fields = {name: form.get(name, "") for name in LEVEL_FORM_FIELDS}
    target = (form.get("target") or "").strip()
    errors: dict[str, str] = {}
    new_name = (form.get("new_dataset") or "").strip()
    sample = (form.get("sample") or "").strip() or None
    kind = form.get("kind") or "measured"
    if kind not in ("measured", "imported"):
        errors["kind"] = "choose measured or imported"
    if not target:
        errors["target"] = "choose the dataset the level goes into"
    elif target == NEW_DATASET and not new_name:
        errors["new_dataset"] = "name the new dataset"
    elif len(new_name) > 200:
        errors["new_dataset"] = "at most 200 characters"
    for field_name, value, limit in (("new_dataset", new_name, 200), ("sample", sample or "", 200),
                                     ("citation", (form.get("citation") or "").strip(), 2000)):
        if field_name not in errors and text_problem(value, limit, multiline=field_name == "citation"):
            errors[field_name] = f"the text {text_problem(value, limit, multiline=field_name == 'citation')}"
    record, problems = validate_level(fields, source=FORM_SOURCE,
                                      default_dataset=new_name if target == NEW_DATASET else None)
    by_field, general = _problems_by_field(problems, LEVEL_FORM_FIELDS)
    errors.update(by_field)
    if errors or general:
        return _desk(400, level_errors=errors, level_values=values, level_notes=general)
    cat = services.catalog()
    try:
        if target == NEW_DATASET:
            report = cat.import_level_records([record], source=FORM_SOURCE, sample=sample, kind=kind,
                                              citation=(form.get("citation") or "").strip()[:2000])
            where = report.dataset
        else:
            cat.add_levels(target, [record], source=FORM_SOURCE)
            where = target
    except NotFoundError as exc:
        return _desk(400, level_errors={"target": str(exc)}, level_values=values)
    except PhysicsInputError as exc:
        return _desk(400, level_errors={"target": str(exc)}, level_values=values)
    except InputFileError as exc:  # a new dataset's name of a reserved form (ReservedNameError)
        return _desk(400, level_errors={"new_dataset": exc.first.message}, level_values=values)
    except AlreadyExistsError:
        field = "new_dataset" if target == NEW_DATASET else "label"
        message = (f"a dataset named {new_name!r} already exists" if target == NEW_DATASET else
                   f"dataset {target!r} already holds this state (configuration, term, J) or this label")
        return _desk(400, level_errors={field: message}, level_values=values)
    except StoreError as exc:
        return _desk(400, level_errors={}, level_values=values, level_notes=[str(exc)])
    services.forget_species()
    flash(f"Level {record.label!r} of {record.spectrum.name} added to dataset {where!r}.", "ok")
    return redirect(url_for("edit.desk") + "#add-level", code=303)


# ----------------------------------------------------------------- upload

def _serializer() -> URLSafeTimedSerializer:
    return URLSafeTimedSerializer(_secret_key(), salt="levels-upload-v1")


def staging_dir() -> Path:
    """Folder holding uploads between preview and commit."""
    folder = Path(current_app.config.get("LEVELS_UPLOAD_DIR") or Path(current_app.instance_path) / "uploads")
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def _sweep(folder: Path, max_age: float) -> None:
    now = time.time()
    for path in [*folder.glob("*.upload"), *folder.glob("*.taken")]:
        try:
            if now - path.stat().st_mtime > max_age:
                path.unlink()
        except OSError:
            pass


def _upload_options(form) -> tuple[dict, dict]:
    errors = {}
    options = {
        "sample": (form.get("sample") or "").strip() or None,
        "dataset": (form.get("dataset") or "").strip() or None,
        "kind": form.get("kind") or "measured",
        "citation": (form.get("citation") or "").strip(),
    }
    if options["kind"] not in ("measured", "imported"):
        errors["kind"] = "choose measured or imported"
    for name, limit in (("sample", 200), ("dataset", 200), ("citation", 2000)):
        value = options[name]
        if value and len(value) > limit:
            errors[name] = f"at most {limit} characters"
        elif value and text_problem(value, limit, multiline=name == "citation"):
            errors[name] = f"the text {text_problem(value, limit, multiline=name == 'citation')}"
    return options, errors


#: columns of a measured spectrum (``levels peaks``, the spectrum page); such a file has no other column
SPECTRUM_FILE_COLUMNS = frozenset({"wavelength_nm", "pixel", "intensity", "intensity_unc"})
#: what to do with a file the desk does not import, by kind
ELSEWHERE = {
    "peaks": "it lists measured peaks (a peak_nm column, as 'levels peaks' writes), not levels or measured lines, "
             "so the desk does not import it. Match its peaks to lines with 'levels identify SPECIES {name}', or "
             "derive Te and ne with 'levels diagnose SPECIES {name}'; the spectrum page (Analysis) fits and "
             "identifies peaks from the measured spectrum itself",
    "spectrum": "it is a measured spectrum (wavelength or pixel with intensity), not levels or measured lines, so "
                "the desk does not import it. Fit and identify its peaks on the spectrum page (Analysis), or with "
                "'levels peaks {name}'",
}
#: how each kind is named on the preview page
KIND_NAMES = {"levels": "levels file", "lines": "measured-lines file", "peaks": "peaks file",
              "spectrum": "spectrum file"}


def upload_kind(columns, source: str, header_line: int) -> str:
    """The kind of an uploaded table by its header: ``levels`` or ``lines`` (as ``levels import`` decides, by
    :func:`levels.service.imports.detect_file_kind`), or ``peaks`` / ``spectrum`` (files the desk does not
    import)."""
    names = set(columns)
    if "peak_nm" in names:
        return "peaks"
    if "intensity" in names and names <= SPECTRUM_FILE_COLUMNS and names & {"wavelength_nm", "pixel"}:
        return "spectrum"
    return detect_file_kind(columns, source, header_line)


def preview_upload(content: bytes, name: str) -> tuple[str, Sequence[LevelRecord] | Sequence[LineRecord],
                                                      list[Problem]]:
    """(kind, records, problems) of an uploaded file, validated in full and nothing written.

    Measured lines get every check of their import, against the stored levels too (labels, the multipole's
    parity and J rules, the Ritz wavenumber), in a transaction that is rolled back.
    """
    try:
        table = read_delimited(content, source=name)
    except InputFileError as exc:
        return "levels", [], exc.problems
    kind = upload_kind(table.columns, name, table.header_line)
    if kind in ELSEWHERE:
        message = f"{name} is a {KIND_NAMES[kind]}: {ELSEWHERE[kind].format(name=name)}."
        return kind, [], [Problem(name, table.header_line, None, message)]
    if kind == "lines":
        line_records, problems = check_line_file(services.catalog(), content, name)
        return kind, line_records, problems
    level_records, problems = services.catalog().preview_levels(content, source=name)
    return kind, level_records, problems


@bp.post("/upload")
def upload_preview():
    """Parse and validate an uploaded levels or measured-lines file; show every problem, or the rows and a commit
    button; name a peaks or spectrum file and where it goes."""
    upload = request.files.get("file")
    options, errors = _upload_options(request.form)
    if upload is None or not upload.filename:
        errors["file"] = "choose a levels or measured-lines file (CSV) to upload"
    if errors:
        return _desk(400, upload_errors=errors)
    name = secure_filename(upload.filename) or "upload.csv"
    if not options["dataset"] and automatic_dataset_name_problem(options["sample"], name):
        return _desk(400, upload_errors={"dataset": f"{automatic_dataset_name_problem(options['sample'], name)}; "
                                                    "name the dataset"})
    content = upload.read()
    kind, records, problems = preview_upload(content, name)
    token = None
    if not problems:
        folder = staging_dir()
        _sweep(folder, float(current_app.config["LEVELS_UPLOAD_MAX_AGE_S"]))
        stage_id = secrets.token_urlsafe(18)
        (folder / f"{stage_id}.upload").write_bytes(content)
        token = _serializer().dumps({"id": stage_id, "name": name, "sha256": hashlib.sha256(content).hexdigest(),
                                     "file_kind": kind, **options})
    return render_template("preview.html", name=name, size=len(content), records=records[:PREVIEW_ROWS],
                           record_count=len(records), problems=problems, token=token, options=options,
                           capped=len(problems) >= 100, kind=kind, kind_name=KIND_NAMES[kind],
                           elsewhere=kind in ELSEWHERE)


@bp.post("/upload/commit")
def upload_commit():
    """Write a previewed upload as one new dataset (one transaction)."""
    token = request.form.get("token", "")
    try:
        staged = _serializer().loads(token, max_age=float(current_app.config["LEVELS_UPLOAD_MAX_AGE_S"]))
    except SignatureExpired:
        return _desk(400, upload_errors={"file": "the preview has expired; upload the file again"})
    except BadSignature:
        abort(400, description="the upload token is not valid; upload the file again")
    stage_id = str(staged.get("id", ""))
    path = staging_dir() / f"{stage_id}.upload"
    if not stage_id.replace("-", "").replace("_", "").isalnum() or not path.is_file():
        return _desk(400, upload_errors={"file": "this upload was already written or has expired; upload it again"})
    # claim the staged file (a rename succeeds once), so a double submit writes one dataset
    taken = path.with_suffix(".taken")
    try:
        os.replace(path, taken)
    except OSError:
        return _desk(400, upload_errors={"file": "this upload was already written or has expired; upload it again"})
    content = taken.read_bytes()
    if hashlib.sha256(content).hexdigest() != staged.get("sha256"):
        taken.unlink(missing_ok=True)
        abort(400, description="the staged upload does not match its preview; upload the file again")
    cat = services.catalog()
    try:
        report = cat.import_file(staged["name"], content=content, source=staged["name"], sample=staged.get("sample"),
                                 dataset=staged.get("dataset"), kind=staged.get("kind") or "measured",
                                 citation=staged.get("citation") or "")
    except InputFileError as exc:
        taken.unlink(missing_ok=True)
        kind = staged.get("file_kind") or "levels"
        return render_template("preview.html", name=staged["name"], size=len(content), records=[], record_count=0,
                               problems=exc.problems, token=None, options=staged, capped=False, kind=kind,
                               kind_name=KIND_NAMES.get(kind, "file"), elsewhere=False), 400
    except (AlreadyExistsError, StoreError) as exc:
        os.replace(taken, path)  # nothing was written: the same preview may be committed again after a fix
        field = "dataset" if isinstance(exc, AlreadyExistsError) else "file"
        return _desk(400, upload_errors={field: str(exc)})
    taken.unlink(missing_ok=True)
    services.forget_species()
    wrote = (f"{report.lines} measured line{'' if report.lines == 1 else 's'}" if staged.get("file_kind") == "lines"
             else f"{report.levels} levels")
    flash(f"Wrote {wrote} of {', '.join(report.species)} as dataset {report.dataset!r}.", "ok")
    for warning in report.warnings:  # e.g. levels whose state another dataset of the species holds
        flash(warning, "warn")
    return redirect(url_for("browse.dataset", dataset_id=report.dataset_id), code=303)
