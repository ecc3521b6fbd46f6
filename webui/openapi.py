"""The OpenAPI 3 document of the JSON API (``/api/v1/openapi.json``).

Written by hand next to the routes of :mod:`webui.api`; a test checks that the
two list the same operations, and a schemathesis run checks the responses
against these schemas.
"""

from __future__ import annotations

from levels import __version__
from levels.catalog import LEVEL_COLUMNS, LINE_LIST_COLUMNS, MULTIPOLE_CODES, SPECIES_COLUMNS

from webui.params import API_DEFAULT_LIMIT, API_MAX_LIMIT, MAX_OFFSET


def _nullable(kind: str, **extra) -> dict:
    return {"type": kind, "nullable": True, **extra}


_STR = {"type": "string"}
_INT = {"type": "integer"}
_NUM = {"type": "number"}

SPECIES_ROW = {
    "type": "object",
    "required": list(SPECIES_COLUMNS),
    "properties": {
        "spectrum": _STR, "z": _INT, "charge": _INT, "mass_number": _INT, "levels": _INT, "lines": _INT,
        "ionization_cm1": _nullable("number", description="cm-1"),
        "ionization_unc_cm1": _nullable("number", description="cm-1"),
        "datasets": {"type": "string", "description": "dataset names joined by '; '"},
    },
}
LEVEL_ROW = {
    "type": "object",
    "required": list(LEVEL_COLUMNS),
    "properties": {
        "spectrum": _STR, "label": _STR, "configuration": _STR, "term": _STR,
        "j": {"type": "string", "example": "3/2"}, "parity": {"type": "integer", "enum": [1, -1]},
        "energy_cm1": {"type": "number", "description": "cm-1 above the ground level"},
        "unc_cm1": _nullable("number", description="cm-1"), "g": _INT,
        "n": _nullable("integer"), "l": _nullable("integer"),
        "lifetime_s": _nullable("number", description="s"), "lande_g": _nullable("number"), "dataset": _STR,
    },
}
LINE_ROW = {
    "type": "object",
    "required": list(LINE_LIST_COLUMNS),
    "properties": {
        "spectrum": _STR, "lower": _STR, "upper": _STR,
        "lower_cm1": {"type": "number", "description": "cm-1"}, "upper_cm1": {"type": "number", "description": "cm-1"},
        "wavenumber_cm1": {"type": "number", "description": "cm-1"},
        "vacuum_nm": {"type": "number", "description": "nm"},
        "air_nm": _nullable("number", description="nm; empty below 200 nm"),
        "multipole": _STR, "a_per_s": _nullable("number", description="s-1"), "f_abs": _nullable("number"),
        "line_strength_au": _nullable("number", description="atomic units"), "g_lower": _INT, "g_upper": _INT,
        "unc_nm": _nullable("number", description="nm"), "dataset": _STR,
        "obs_nm": _nullable("number", description="nm, in the asked medium; observed wavelength of a measured line"),
        "ritz_nm": _nullable("number", description="nm, in the asked medium; Ritz wavelength from the two levels"),
        "obs_minus_ritz_nm": _nullable("number", description="nm; obs_nm - ritz_nm"),
        "line_name": _nullable("string", description="customary hydrogen line name (Hα, Lyβ); null otherwise"),
    },
}
PROVENANCE = {"type": "object", "additionalProperties": {"type": "string"},
              "required": ["tool", "store", "datasets", "query"]}
DATASET = {
    "type": "object",
    "required": ["id", "name", "kind", "method", "method_version", "citation", "author", "description",
                 "options", "created_at", "sample", "retracted", "levels", "lines"],
    "properties": {
        "id": _INT, "name": _STR, "kind": {"type": "string", "enum": ["computed", "measured", "imported"]},
        "method": _STR, "method_version": _STR, "citation": _STR, "author": _STR, "description": _STR,
        "options": {"type": "object"}, "created_at": {"type": "string"}, "sample": _nullable("string"),
        "retracted": {"type": "boolean"}, "levels": _INT, "lines": _INT,
    },
}
ERROR = {
    "type": "object",
    "required": ["error"],
    "properties": {"error": {
        "type": "object",
        "required": ["code", "message", "field"],
        "properties": {
            "code": _STR, "message": _STR, "field": _nullable("string"),
            "problems": {"type": "array", "items": {
                "type": "object", "required": ["field", "message"],
                "properties": {"field": _nullable("string"), "message": _STR}}},
        },
    }},
}
_TEXT_OR_NUMBER = {"anyOf": [{"type": "string", "maxLength": 200}, {"type": "number"}]}
NEW_LEVEL = {
    "type": "object",
    "additionalProperties": False,
    "required": ["spectrum", "configuration", "term", "j", "energy_cm1"],
    "properties": {
        "spectrum": {"type": "string", "maxLength": 40, "example": "Li I"},
        "label": {"type": "string", "maxLength": 200},
        "configuration": {"type": "string", "maxLength": 200, "example": "1s2.2p"},
        "term": {"type": "string", "maxLength": 32, "example": "2P°"},
        "j": {**_TEXT_OR_NUMBER, "example": "3/2"},
        "parity": _TEXT_OR_NUMBER,
        "energy_cm1": {**_TEXT_OR_NUMBER, "description": "cm-1"},
        "unc_cm1": {**_TEXT_OR_NUMBER, "description": "cm-1"},
        "g": _TEXT_OR_NUMBER, "n": _TEXT_OR_NUMBER, "l": _TEXT_OR_NUMBER,
        "lifetime_s": {**_TEXT_OR_NUMBER, "description": "s"}, "lande_g": _TEXT_OR_NUMBER,
    },
}
NEW_LINE = {
    "type": "object",
    "additionalProperties": False,
    "required": ["spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm"],
    "properties": {
        "spectrum": {"type": "string", "maxLength": 32, "example": "Li I"},
        "lower": {"type": "string", "maxLength": 200, "description": "label of a stored or posted level"},
        "upper": {"type": "string", "maxLength": 200},
        "wavelength_nm": {**_TEXT_OR_NUMBER, "description": "nm, in the given medium"},
        "medium": {"type": "string", "enum": ["air", "vacuum"]},
        "unc_nm": {**_TEXT_OR_NUMBER, "description": "nm"},
        "intensity": _TEXT_OR_NUMBER, "a_per_s": {**_TEXT_OR_NUMBER, "description": "s-1"}, "f_abs": _TEXT_OR_NUMBER,
        "multipole": {"type": "string", "enum": ["E1", "M1", "E2"]}, "note": {"type": "string", "maxLength": 4000},
    },
}
NEW_DATASET = {
    "type": "object",
    "additionalProperties": False,
    "required": ["name"],
    "properties": {
        "name": {"type": "string", "minLength": 1, "maxLength": 200},
        "kind": {"type": "string", "enum": ["measured", "imported"], "default": "measured"},
        "sample": {"type": "string", "maxLength": 200, "description": "lab sample (created if new)"},
        "citation": {"type": "string", "maxLength": 4000},
        "description": {"type": "string", "maxLength": 4000},
        "levels": {"type": "array", "maxItems": 100000, "items": {"$ref": "#/components/schemas/NewLevel"}},
        "lines": {"type": "array", "maxItems": 100000, "items": {"$ref": "#/components/schemas/NewLine"},
                  "description": "measured lines; lower/upper are labels of posted or stored levels"},
    },
}


def _json(schema: dict) -> dict:
    return {"application/json": {"schema": schema}}


def _ref(name: str) -> dict:
    return {"$ref": f"#/components/schemas/{name}"}


def _error(description: str) -> dict:
    return {"description": description, "content": _json(_ref("Error"))}


def _table(row: str, paged: bool = False) -> dict:
    props = {"provenance": _ref("Provenance"), "columns": {"type": "array", "items": _STR},
             "rows": {"type": "array", "items": _ref(row)}, "total": {"type": "integer", "minimum": 0}}
    required = ["provenance", "columns", "rows", "total"]
    if paged:
        props["limit"] = _INT
        props["offset"] = _INT
        required += ["limit", "offset"]
    return {"type": "object", "required": required, "properties": props}


SPECTRUM_PARAM = {"name": "spectrum", "in": "path", "required": True,
                  "description": "spectrum notation with '_' for the space (He_II); ion notation (C5+) also works",
                  "schema": {"type": "string", "maxLength": 40}, "example": "Li_I"}


def openapi_document() -> dict:
    """The OpenAPI 3.0 document of ``/api/v1``."""
    line_params = [
        SPECTRUM_PARAM,
        {"name": "from_nm", "in": "query", "description": "window start, nm (in the medium)",
         "schema": {"type": "number", "exclusiveMinimum": True, "minimum": 0}},
        {"name": "to_nm", "in": "query", "description": "window end, nm (in the medium)",
         "schema": {"type": "number", "exclusiveMinimum": True, "minimum": 0}},
        {"name": "from", "in": "query",
         "description": "window start in any spectral unit, instead of from_nm: a wavelength (486nm, 4861A, 0.486um; "
                        "in the medium; a bare number is nm), a wavenumber (20570cm-1), a photon energy (2.55eV, "
                        "6.9keV) or a frequency (617THz); wavenumbers, energies and frequencies name vacuum "
                        "wavelengths and are converted to the medium; such bounds may come in either order",
         "schema": {"type": "string", "maxLength": 200}, "example": "15200cm-1"},
        {"name": "to", "in": "query", "description": "window end in any spectral unit, instead of to_nm (see from)",
         "schema": {"type": "string", "maxLength": 200}, "example": "16000cm-1"},
        {"name": "medium", "in": "query", "schema": {"type": "string", "enum": ["vacuum", "air"], "default": "vacuum"}},
        {"name": "multipole", "in": "query", "style": "form", "explode": False,
         "schema": {"type": "array", "items": {"type": "string", "enum": list(MULTIPOLE_CODES)}}},
        {"name": "min_a", "in": "query", "description": "smallest Einstein A, s-1",
         "schema": {"type": "number", "minimum": 0}},
        {"name": "lower", "in": "query", "description": "lower level: a label, a glob ('2p*') or a series "
                                                       "pattern ('ns 2S1/2', n running)",
         "schema": {"type": "string", "maxLength": 200}, "example": "2p 2P°3/2"},
        {"name": "series", "in": "query", "description": "upper level in this series pattern (n running)",
         "schema": {"type": "string", "maxLength": 200}, "example": "nd 2D5/2"},
        {"name": "line_name", "in": "query", "description": "customary hydrogen line name (H I, D I, T I): "
                                                           "Hα, H-alpha, Lyβ, Pa9",
         "schema": {"type": "string", "maxLength": 200}, "example": "H-alpha"},
        {"name": "order", "in": "query",
         "schema": {"type": "string", "enum": ["wavelength", "-wavelength", "a", "strength"], "default": "wavelength"}},
        {"name": "limit", "in": "query",
         "schema": {"type": "integer", "minimum": 1, "maximum": API_MAX_LIMIT, "default": API_DEFAULT_LIMIT}},
        {"name": "offset", "in": "query", "schema": {"type": "integer", "minimum": 0, "maximum": MAX_OFFSET,
                                                      "default": 0}},
    ]
    return {
        "openapi": "3.0.3",
        "info": {"title": "levels JSON API", "version": __version__,
                 "description": "Atomic levels and lines of this store. Reads are open; creating a dataset "
                                "needs the site's bearer token."},
        "servers": [{"url": "/api/v1"}],
        "paths": {
            "/openapi.json": {"get": {"operationId": "openapi", "summary": "This document",
                                      "responses": {"200": {"description": "the OpenAPI document",
                                                            "content": _json({"type": "object"})}}}},
            "/species": {"get": {
                "operationId": "listSpecies", "summary": "Every stored species with counts and ionization energy",
                "responses": {"200": {"description": "species table", "content": _json(_table("SpeciesRow"))}},
            }},
            "/species/{spectrum}/levels": {"get": {
                "operationId": "listLevels", "summary": "Levels of a species",
                "parameters": [SPECTRUM_PARAM,
                               {"name": "dataset", "in": "query", "style": "form", "explode": False,
                                "description": "datasets in order of precedence (default: all, measured first)",
                                "schema": {"type": "array", "items": {"type": "string", "maxLength": 200}}}],
                "responses": {"200": {"description": "level table", "content": _json(_table("LevelRow"))},
                              "400": _error("a bad parameter"), "404": _error("no such species")},
            }},
            "/species/{spectrum}/lines": {"get": {
                "operationId": "listLines", "summary": "Lines of a species in a wavelength window (paged)",
                "parameters": line_params,
                "responses": {"200": {"description": "one page of the line list",
                                      "content": _json(_table("LineRow", paged=True))},
                              "400": _error("a bad parameter"), "404": _error("no such species")},
            }},
            "/datasets": {"post": {
                "operationId": "createDataset", "summary": "Create a measured dataset with its levels (all-or-nothing)",
                "security": [{"bearer": []}],
                "requestBody": {"required": True, "content": _json(_ref("NewDataset"))},
                "responses": {
                    "201": {"description": "created", "headers": {"Location": {"schema": _STR}},
                            "content": _json({"type": "object", "required": ["dataset"],
                                              "properties": {"dataset": _ref("Dataset")}})},
                    "400": _error("the body or a level is invalid (every problem is listed); nothing written"),
                    "401": _error("no or wrong bearer token; nothing written"),
                    "409": _error("a dataset of that name exists; nothing written"),
                    "413": _error("the body is too large"),
                    "415": _error("the body is not JSON"),
                    "422": _error("the store refused the data; nothing written"),
                },
            }},
            "/datasets/{id}": {"get": {
                "operationId": "getDataset", "summary": "One dataset with its counts",
                "parameters": [{"name": "id", "in": "path", "required": True,
                                "schema": {"type": "integer", "minimum": 1}}],
                "responses": {"200": {"description": "the dataset",
                                      "content": _json({"type": "object", "required": ["dataset"],
                                                        "properties": {"dataset": _ref("Dataset")}})},
                              "404": _error("no such dataset")},
            }},
        },
        "components": {
            "securitySchemes": {"bearer": {"type": "http", "scheme": "bearer"}},
            "schemas": {"SpeciesRow": SPECIES_ROW, "LevelRow": LEVEL_ROW, "LineRow": LINE_ROW,
                        "Provenance": PROVENANCE, "Dataset": DATASET, "Error": ERROR,
                        "NewLevel": NEW_LEVEL, "NewLine": NEW_LINE, "NewDataset": NEW_DATASET},
        },
    }
