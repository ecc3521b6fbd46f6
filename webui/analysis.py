"""Spectrum analysis page: upload a measured spectrum, see its peaks fitted, the Boltzmann plot, and commit.

``GET /analysis/`` shows the form; ``POST /analysis/`` fits the uploaded spectrum
(optionally through an uploaded calibration), identifies the peaks among the
named species and derives Te and ne (:mod:`levels.service.spectra`); nothing is
written to the store. The identified, unblended lines travel to the commit form
inside a signed, timed token; ``POST /analysis/commit`` writes them as a new
measured dataset of a sample, in one transaction, after the desk's token check.
Every form carries a CSRF token, as the sample desk's forms do.
"""

from __future__ import annotations

import math
from typing import Any

from flask import Blueprint, current_app, redirect, render_template, request, url_for
from flask.typing import ResponseReturnValue
from itsdangerous import BadSignature, SignatureExpired, URLSafeTimedSerializer
from werkzeug.utils import secure_filename

from levels.errors import InputFileError, LevelsError, UnitError

from webui import services
from webui.security import allow_plot_styles

bp = Blueprint("analysis", __name__, url_prefix="/analysis")

#: seconds a result may wait before its lines are committed
COMMIT_MAX_AGE_S = 3600
PROFILES = (("gauss", "Gaussian"), ("voigt", "Voigt"))
MEDIA = (("", "as the file says (else air)"), ("air", "air"), ("vacuum", "vacuum"))


def _data_block(text: str) -> str:
    """JSON safe inside a <script type="application/json"> block (no closing tag can appear)."""
    return text.replace("</", "<\\/")


def _signer() -> URLSafeTimedSerializer:
    return URLSafeTimedSerializer(current_app.secret_key or "", salt="levels-analysis-lines-v1")


def _form_defaults() -> dict:
    return {
        "species": "H I",
        "profile": "gauss",
        "min_snr": "5",
        "medium": "",
        "instrument": "0nm",
        "tgas": "300K",
        "tolerance": "0.01nm",
        "sample": "",
    }


def _page(status: int = 200, **context: object) -> tuple[str, int]:
    allow_plot_styles()
    context.setdefault("values", _form_defaults())
    context.setdefault("errors", {})
    return render_template("analysis.html", profiles=PROFILES, media=MEDIA, **context), status


@bp.get("/")
def page() -> ResponseReturnValue:
    """The empty analysis form."""
    return _page()


def _quantity(values: dict, errors: dict, name: str, kind: str) -> float | None:
    from levels.units import temperature_k, wavelength_nm

    text = values.get(name, "").strip()
    try:
        if kind == "wavelength":
            return 0.0 if text in ("", "0", "0nm") else wavelength_nm(text)
        return temperature_k(text)
    except (UnitError, ValueError) as exc:
        errors[name] = str(exc)
        return None


@bp.post("/")
def analyse() -> ResponseReturnValue:
    """Fit the uploaded spectrum and, with species named, diagnose it; nothing is written."""
    from levels.figures import boltzmann_figure, figure_json, peak_fit_figure
    from levels.service import spectra as service

    values = {key: request.form.get(key, default) for key, default in _form_defaults().items()}
    errors: dict[str, str] = {}
    upload = request.files.get("spectrum")
    if upload is None or not upload.filename:
        errors["spectrum"] = "choose a spectrum file (CSV, TSV or FITS)"
    min_snr: float | None
    try:
        min_snr = float(values["min_snr"])
        if not (math.isfinite(min_snr) and min_snr > 0):
            raise ValueError
    except ValueError:
        errors["min_snr"] = "a positive number, e.g. 5"
        min_snr = None
    if values["profile"] not in dict(PROFILES):
        errors["profile"] = "Gaussian or Voigt"
    if values["medium"] not in dict(MEDIA):
        errors["medium"] = "air or vacuum"
    instrument = _quantity(values, errors, "instrument", "wavelength")
    tolerance = _quantity(values, errors, "tolerance", "wavelength")
    tgas = _quantity(values, errors, "tgas", "temperature")
    if errors or upload is None or min_snr is None or tgas is None:    # the last three are None only with errors
        return _page(400, values=values, errors=errors)
    name = secure_filename(upload.filename or "") or "spectrum.csv"
    content = upload.read()
    cal = request.files.get("calibration")
    cal_content = cal.read() if cal is not None and cal.filename else None
    try:
        peaks = service.find_peaks(
            content=content,
            source=name,
            medium=values["medium"] or None,
            calibration_content=cal_content,
            min_snr=min_snr,
            profile=values["profile"],
        )
    except InputFileError as exc:
        return _page(
            400,
            values=values,
            errors={"spectrum": "the file was not accepted"},
            problems=[str(p) for p in exc.problems[:50]],
        )
    except LevelsError as exc:
        return _page(400, values=values, errors={"spectrum": str(exc)})
    axis = "wavelength [nm]" if peaks.data.axis == "wavelength_nm" else "pixel"
    title = f"{name}: {len(peaks.rows)} peaks ({values['profile']})"
    fit_figure = _data_block(
        figure_json(
            peak_fit_figure(peaks.data.x, peaks.data.intensity, peaks.model(), peaks.rows, axis_title=axis, title=title)
        )
    )
    context: dict[str, Any] = {"values": values, "peaks": peaks, "fit_figure": fit_figure, "source": name}
    species = [s.strip() for s in values["species"].split(",") if s.strip()]
    if species and peaks.rows:
        import csv
        import io

        buffer = io.StringIO()
        writer = csv.DictWriter(buffer, fieldnames=service.PEAK_COLUMNS, extrasaction="ignore")
        writer.writeheader()
        writer.writerows(peaks.rows)
        try:
            result = service.diagnose(
                services.catalog(),
                species,
                content=buffer.getvalue().encode(),
                source=f"peaks of {name}",
                tolerance_nm=tolerance or 0.01,
                instrument_fwhm_nm=instrument or 0.0,
                tgas_k=tgas,
            )
        except LevelsError as exc:
            context["diagnose_error"] = str(exc)
        else:
            context["report"] = result.report
            context["boltzmann_figure"] = _data_block(
                figure_json(boltzmann_figure(result.report, title="Boltzmann plot"))
            )
            context["measured_lines"] = result.measured_lines
            if result.measured_lines:
                context["lines_token"] = _signer().dumps({"source": name, "lines": result.measured_lines})
    return _page(**context)


@bp.post("/commit")
def commit() -> ResponseReturnValue:
    """Write the identified lines of an analysis as a new measured dataset of a sample."""
    from webui.edit import desk_locked

    if desk_locked():
        return redirect(url_for("edit.unlock", next="/desk/"), code=303)
    from levels.service import spectra as service

    sample = request.form.get("sample", "").strip()
    try:
        payload = _signer().loads(request.form.get("lines_token", ""), max_age=COMMIT_MAX_AGE_S)
    except SignatureExpired:
        return _page(400, errors={"commit": "the analysis has expired; upload the spectrum again"})
    except BadSignature:
        return _page(400, errors={"commit": "the lines token is not valid; upload the spectrum again"})
    if not sample or len(sample) > 200:
        return _page(400, errors={"commit": "name the sample the lines belong to (up to 200 characters)"})
    try:
        report = service.commit_lines(services.catalog(), payload["lines"], sample=sample, source=payload["source"])
    except InputFileError as exc:
        return _page(
            400, errors={"commit": "the lines were not accepted"}, problems=[str(p) for p in exc.problems[:50]]
        )
    except LevelsError as exc:
        return _page(400, errors={"commit": str(exc)})
    return _page(committed={"dataset": report.dataset, "lines": report.lines, "sample": sample})
