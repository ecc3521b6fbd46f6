"""Spectrum, peaks and calibration files: good files read, bad ones refused naming file, line and field."""

from __future__ import annotations

import numpy as np
import pytest

from levels.errors import InputFileError
from levels.io import spectra


def _problems(content: bytes, source: str = "lamp.csv") -> list[str]:
    with pytest.raises(InputFileError) as info:
        spectra.read_spectrum(content, source=source)
    return [str(p) for p in info.value.problems]


def test_csv_with_comments_medium_and_uncertainties():
    text = (
        b"# invented test spectrum\n# medium: vacuum\nwavelength_nm,intensity,intensity_unc\n"
        b"500.0,1,0.1\n\n# a comment between rows\n500.1,3nm,0.1\n500.2,2,0.1\n"
    )
    with pytest.raises(InputFileError):
        spectra.read_spectrum(text, source="a.csv")  # '3nm' in the intensity column: a unit where none belongs
    data = spectra.read_spectrum(text.replace(b"3nm", b"3"), source="a.csv")
    assert data.axis == "wavelength_nm" and data.medium == "vacuum"
    assert data.intensity_unc.tolist() == [0.1, 0.1, 0.1]
    assert data.line_of.tolist() == [4, 7, 8]


def test_tsv_pixel_axis_decreasing_is_reversed():
    data = spectra.read_spectrum(b"pixel\tintensity\n3\t30\n2\t20\n1\t10\n", source="f.tsv")
    assert data.axis == "pixel" and data.x.tolist() == [1.0, 2.0, 3.0] and data.intensity.tolist() == [10, 20, 30]


@pytest.mark.parametrize(
    "content,expected",
    [
        (b"", "lamp.csv: the file is empty"),
        (b"# only a comment\n", "lamp.csv: no header line"),
        (b"wavelength_nm,intensity\n", "lamp.csv:1: the header is not followed by any data row"),
        (b"wavelength_nm,intensity\n500,1\n502,2\n501,3\n", "lamp.csv:4: wavelength_nm: the axis is not monotonic"),
        (b"wavelength_nm,intensity\n500,1\n501,NaN\n502,3\n", "lamp.csv:3: intensity: 'NaN' is not a finite number"),
        (b"wavelength_nm,intensity\n500,1\n501,2\n501,3\n", "lamp.csv:4: wavelength_nm: duplicate sample"),
        (b"wavelength_nm,pixel,intensity\n500,1,1\n", "lamp.csv:1: pixel: mixed units"),
        (b"wavelength_nm,intensity\n500,1\n5011A,2\n502,3\n", "lamp.csv:3: wavelength_nm: mixed units: '5011A'"),
        (b"wavelength,intensity\n500,1\n", "lamp.csv:1: wavelength: unknown column (say the unit"),
        (b"wavelength_nm,intensity\n500,1\n501\n", "lamp.csv:3: expected 2 fields"),
        (
            b"wavelength_nm,intensity,intensity_unc\n500,1,0\n501,1,1\n502,1,1\n",
            "lamp.csv:2: intensity_unc: uncertainty must be > 0",
        ),
        (b"pixel,intensity\n1,2\n2,x\n", "lamp.csv:3: intensity: 'x' is not a number"),
        (b"# medium: water\npixel,intensity\n1,2\n", "lamp.csv:1: medium: 'water' is not a medium"),
    ],
)
def test_bad_spectra_name_file_line_and_field(content, expected):
    problems = _problems(content)
    assert any(p.startswith(expected) for p in problems), problems


def test_fits_image_with_linear_wavelength_axis(tmp_path):
    fits = pytest.importorskip("astropy.io.fits")
    hdu = fits.PrimaryHDU(np.array([1.0, 5.0, 2.0, 1.0]))
    hdu.header["CRVAL1"] = 5000.0
    hdu.header["CDELT1"] = 0.5
    hdu.header["CRPIX1"] = 1.0
    hdu.header["CUNIT1"] = "Angstrom"
    path = tmp_path / "invented.fits"
    hdu.writeto(path)
    data = spectra.read_spectrum(path)
    assert data.axis == "wavelength_nm"
    assert data.x.tolist() == pytest.approx([500.0, 500.05, 500.1, 500.15])


def test_fits_bad_values_name_the_sample(tmp_path):
    fits = pytest.importorskip("astropy.io.fits")
    path = tmp_path / "bad.fits"
    fits.PrimaryHDU(np.array([1.0, np.nan, 2.0])).writeto(path)
    with pytest.raises(InputFileError, match=r"bad.fits: intensity: sample 2: not a finite number"):
        spectra.read_spectrum(path)
    table = tmp_path / "table.fits"
    cols = [
        fits.Column(name="pixel", format="D", array=np.array([1.0, 2.0, 2.0])),
        fits.Column(name="intensity", format="D", array=np.array([1.0, 2.0, 3.0])),
    ]
    fits.HDUList([fits.PrimaryHDU(), fits.BinTableHDU.from_columns(cols)]).writeto(table)
    with pytest.raises(InputFileError, match=r"table HDU 1 row 3: duplicate sample"):
        spectra.read_spectrum(table)


def test_not_a_fits_file():
    with pytest.raises(InputFileError, match="x.fits: not a readable FITS file"):
        spectra.read_spectrum(b"SIMPLE  = garbage", source="x.fits")


def test_peaks_file_and_its_errors():
    rows = spectra.read_peaks(b"peak_nm,intensity\n656.28,3\n486.13,1\n", source="p.csv")
    assert [r.intensity for r in rows] == [3.0, 1.0] and rows[0].medium == "air"
    with pytest.raises(InputFileError) as info:
        spectra.read_peaks(b"peak_nm,fwhm_nm,medium,width\n656.28,-1,air,3\n", source="p.csv")
    text = [str(p) for p in info.value.problems]
    assert "p.csv:1: width: unknown column" in text[0]
    with pytest.raises(InputFileError) as info:
        spectra.read_peaks(b"peak_nm,fwhm_nm,medium\n656.28,-1,glass\n", source="p.csv")
    text = [str(p) for p in info.value.problems]
    assert any(t.startswith("p.csv:2: fwhm_nm: '-1' must be greater than zero") for t in text), text
    assert any(t.startswith("p.csv:2: medium: 'glass' is not a medium") for t in text), text


def test_calibration_file_errors():
    with pytest.raises(InputFileError, match="cal.json:1: not a calibration JSON"):
        spectra.read_calibration(b"{nope", source="cal.json")
    with pytest.raises(InputFileError, match="cal.json: coefficients: a degree-2 polynomial has 3"):
        spectra.read_calibration(b'{"degree": 2, "coefficients": [1, 2]}', source="cal.json")
    with pytest.raises(InputFileError, match="cal.json: medium"):
        spectra.read_calibration(b'{"degree": 1, "coefficients": [1, 2], "medium": "oil"}', source="cal.json")
