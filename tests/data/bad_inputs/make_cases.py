"""Writes the issue-19 additions to the bad-input catalogue (kept so the odd bytes are reproducible).

Run once from the repository root: ``python tests/data/bad_inputs/make_cases.py``. Every file
holds one mistake; MANIFEST.tsv gives its exact expected message. All values are invented.
"""

import json
from pathlib import Path

HERE = Path(__file__).resolve().parent
LV = "spectrum,configuration,term,j,energy_cm1"
LN = "spectrum,lower,upper,wavelength_nm,medium,unc_nm"
GOOD_LINE = "Li I,1s2.2s 2S1/2,1s2.2p 2P°3/2,670.776,vacuum,0.002"
ESC = "\x1b"


def text(kind, name, content, encoding="utf-8"):
    (HERE / kind / name).write_bytes(content.encode(encoding) if isinstance(content, str) else content)


def js(kind, name, obj):
    (HERE / kind / name).write_text(json.dumps(obj, ensure_ascii=True), encoding="utf-8")


# ----------------------------------------------------------------- levels
text("levels", "j_beyond_int.csv", f"{LV}\nLi I,1s2.2s,,99999999999999999999,0\n")
text("levels", "n_beyond_int.csv", f"{LV},n\nLi I,1s2.2s,2S,1/2,0,99999999999999999999\n")
text("levels", "config_n_beyond_int.csv", f"{LV}\nLi I,1s2.99999999999999999999s,2S,1/2,0\n")
text("levels", "configuration_too_long.csv",
     f"{LV}\nSb I,{'.'.join(f'{n}s' for n in range(100, 151))},,1/2,0\n")
text("levels", "label_with_escape.csv", f"{LV},label\nLi I,1s2.2s,2S,1/2,0,ground{ESC}[31m\n")
text("levels", "label_with_c1_control.csv", f"{LV},label\nLi I,1s2.2s,2S,1/2,0,ground\u009b2J\n")
text("levels", "label_with_bidi_override.csv", f"{LV},label\nLi I,1s2.2s,2S,1/2,0,ground\u202ednuorg\n")
text("levels", "configuration_with_escape.csv", f"{LV}\nLi I,1s2.2s{ESC}[0m,2S,1/2,0\n")
text("levels", "energy_with_underscore.csv", f"{LV}\nLi I,1s2.2s,2S,1/2,0\nLi I,1s2.3s,2S,1/2,27_206.12\n")
text("levels", "energy_arabic_indic_digits.csv", f"{LV}\nLi I,1s2.2s,2S,1/2,٠\n")
text("levels", "energy_fullwidth_digits.csv", f"{LV}\nLi I,1s2.2s,2S,1/2,０\n")
text("levels", "j_arabic_indic_digits.csv", f"{LV}\nLi I,1s2.2s,2S,١/٢,0\n")
text("levels", "configuration_devanagari_digits.csv", f"{LV}\nLi I,१s2.२s,2S,1/2,0\n")
text("levels", "n_fullwidth_digit.csv", f"{LV},n\nLi I,1s2.2s,2S,1/2,0,２\n")
text("levels", "lande_below_range.csv", f"{LV},lande_g\nLi I,1s2.2s,2S,1/2,0,-1e4\n")
text("levels", "lifetime_too_large.csv", f"{LV},lifetime_s\nLi I,1s2.3s,2S,1/2,27206.12,1e305\n")
text("levels", "dataset_name_too_long.csv", f"{LV},dataset\nLi I,1s2.2s,2S,1/2,0,{'d' * 201}\n")
text("levels", "utf32_encoding.csv", f"{LV}\nLi I,1s2.2s,2S,1/2,0\n", "utf-32")
text("levels", "quoted_newline.csv", f'{LV}\nLi I,"1s2.2s\n",2S,1/2,0\n')
text("levels", "unclosed_quote.csv", f'{LV}\nLi I,1s2.2s,"2S,1/2,0\n')
text("levels", "g_beyond_int.csv", f"{LV},g\nLi I,1s2.2s,2S,1/2,0,99999999999999999999\n")

# ----------------------------------------------------------------- lines
text("lines", "a_value_too_large.csv", f"{LN},a_per_s\n{GOOD_LINE},1e305\n")
text("lines", "intensity_too_large.csv", f"{LN},intensity\n{GOOD_LINE},1e305\n")
text("lines", "note_with_escape.csv", f"{LN},note\n{GOOD_LINE},seen{ESC}]0;title\x07\n")
text("lines", "lower_label_too_long.csv", f"{LN}\nLi I,{'x' * 5000},1s2.2p 2P°3/2,670.776,vacuum,0.002\n")
text("lines", "wavelength_fullwidth_digits.csv", f"{LN}\nLi I,1s2.2s 2S1/2,1s2.2p 2P°3/2,６７０.７７６,vacuum,0.002\n")
text("lines", "unc_too_large.csv", f"{LN}\nLi I,1s2.2s 2S1/2,1s2.2p 2P°3/2,670.776,vacuum,1e305\n")
text("lines", "upper_label_with_escape.csv", f"{LN}\nLi I,1s2.2s 2S1/2,1s2.2p{ESC}[1m 2P°3/2,670.776,vacuum,0.002\n")

# ----------------------------------------------------------------- peaks
text("peaks", "peak_with_underscore.csv", "peak_nm,medium\n670_79,air\n")
text("peaks", "peak_arabic_indic_digits.csv", "peak_nm,medium\n٦٧٠.٧٩,air\n")
text("peaks", "note_with_escape.csv", f"peak_nm,medium,note\n670.79,air,strong{ESC}[5m\n")
text("peaks", "intensity_too_large.csv", "peak_nm,medium,intensity\n670.79,air,1e305\n")
text("peaks", "utf32.csv", "peak_nm,medium\n670.79,air\n", "utf-32")
text("peaks", "quoted_newline.csv", 'peak_nm,medium,note\n670.79,air,"first\nsecond"\n')

# ----------------------------------------------------------------- api
LEVEL = {"spectrum": "Li I", "configuration": "1s2.5s", "term": "2S", "j": "1/2", "energy_cm1": 39015.0}
js("api", "j_beyond_64_bits.json", {"name": "api-j", "levels": [{**LEVEL, "term": "", "j": 2 ** 70}]})
js("api", "n_beyond_64_bits.json", {"name": "api-n", "levels": [{**LEVEL, "n": 2 ** 70}]})
js("api", "energy_huge_integer.json", {"name": "api-e", "levels": [{**LEVEL, "energy_cm1": 10 ** 400}]})
js("api", "name_with_escape.json", {"name": f"li{ESC}[2J", "levels": [LEVEL]})
js("api", "citation_with_c1_control.json", {"name": "api-c", "citation": "seen \u0085 here", "levels": [LEVEL]})
js("api", "label_with_escape.json", {"name": "api-l", "levels": [{**LEVEL, "label": f"x{ESC}[31m"}]})
js("api", "sample_too_long.json", {"name": "api-s", "sample": "s" * 201, "levels": [LEVEL]})
js("api", "energy_with_underscore.json", {"name": "api-u", "levels": [{**LEVEL, "energy_cm1": "39_015.0"}]})
js("api", "configuration_too_long.json",
   {"name": "api-cfg", "levels": [{**LEVEL, "spectrum": "Sb I", "term": "",
                                   "configuration": ".".join(f"{n}s" for n in range(100, 151))}]})
js("api", "lande_below_range.json", {"name": "api-g", "levels": [{**LEVEL, "lande_g": -1e301}]})
js("api", "line_note_with_escape.json",
   {"name": "api-ln", "lines": [{"spectrum": "Li I", "lower": "1s2.2s 2S1/2", "upper": "1s2.2p 2P°3/2",
                                 "wavelength_nm": 670.776, "medium": "vacuum", "unc_nm": 0.002,
                                 "note": f"a{ESC}[8m"}]})
(HERE / "api" / "deep_nesting.json").write_text('{"name": "deep", "levels": ' + "[" * 100000 + "]" * 100000 + "}")

# ----------------------------------------------------------------- desk forms
FORM = {"target": "__new__", "new_dataset": "desk-new", "spectrum": "Li I", "configuration": "1s2.5s",
        "term": "2S", "j": "1/2", "energy_cm1": "39015.0"}
js("desk", "level_j_beyond_int.json", {"form": "level", "data": {**FORM, "term": "", "j": "9" * 20}})
js("desk", "level_energy_with_underscore.json", {"form": "level", "data": {**FORM, "energy_cm1": "39_015.0"}})
js("desk", "level_energy_fullwidth.json", {"form": "level", "data": {**FORM, "energy_cm1": "３９０１５"}})
js("desk", "level_label_with_escape.json", {"form": "level", "data": {**FORM, "label": f"a{ESC}[31m"}})
js("desk", "level_lande_below_range.json", {"form": "level", "data": {**FORM, "lande_g": "-5000"}})
js("desk", "level_new_dataset_with_escape.json", {"form": "level", "data": {**FORM, "new_dataset": f"d{ESC}c"}})
js("desk", "level_sample_too_long.json", {"form": "level", "data": {**FORM, "sample": "s" * 201}})
js("desk", "sample_name_with_escape.json", {"form": "sample", "data": {"name": f"cell{ESC}[2J"}})
js("desk", "sample_instrument_with_c1.json",
   {"form": "sample", "data": {"name": "cell-x", "instrument": "grating\u009b"}})
js("desk", "sample_description_with_escape.json",
   {"form": "sample", "data": {"name": "cell-y", "description": f"fill{ESC}[8m"}})
js("desk", "sample_pressure_fullwidth.json", {"form": "sample", "data": {"name": "cell-z", "pressure": "１００Pa"}})
js("desk", "sample_gas_fill_too_long.json", {"form": "sample", "data": {"name": "cell-w", "gas_fill": "g" * 201}})
js("desk", "upload_sample_with_escape.json",
   {"form": "upload", "data": {"sample": f"s{ESC}[1m"}, "file": f"{LV}\nLi I,1s2.5s,2S,1/2,39015.0\n"})
js("desk", "upload_automatic_name_too_long.json",
   {"form": "upload", "data": {"sample": "s" * 195}, "file": f"{LV}\nLi I,1s2.5s,2S,1/2,39015.0\n"})
js("desk", "upload_dataset_too_long.json",
   {"form": "upload", "data": {"dataset": "d" * 201}, "file": f"{LV}\nLi I,1s2.5s,2S,1/2,39015.0\n"})

# ----------------------------------------------------------------- store files (recipes applied to a fresh export)
STORE = {
    "negative_energy": {"table": "levels", "index": 1, "set": {"energy_cm1": -5.0}},
    "label_5000_characters": {"table": "levels", "index": 0, "set": {"label": "x" * 5000}},
    "label_with_escape": {"table": "levels", "index": 0, "set": {"label": f"g{ESC}[2J"}},
    "two_j_beyond_int": {"table": "levels", "index": 0, "set": {"two_j": 2 ** 40}},
    "n_beyond_64_bits": {"table": "levels", "index": 0, "set": {"n": 2 ** 70}},
    "energy_not_a_number": {"table": "levels", "index": 0, "set": {"energy_cm1": "NaN"}},
    "energy_as_text": {"table": "levels", "index": 0, "set": {"energy_cm1": "zero"}},
    "lande_below_range": {"table": "levels", "index": 0, "set": {"lande_g": -1e301}},
    "unc_negative": {"table": "levels", "index": 0, "set": {"unc_cm1": -0.1}},
    "species_z_zero": {"table": "species", "index": 0, "set": {"z": 0}},
    "dataset_name_too_long": {"table": "datasets", "index": 0, "set": {"name": "d" * 201}},
    "sample_name_with_c1": {"table": "samples", "index": 0, "set": {"name": "cell\u009b"}},
    "line_a_beyond_bound": {"table": "lines", "index": 0, "set": {"a_per_s": 1e301}},
    "line_medium_too_long": {"table": "lines", "index": 0, "set": {"medium": "vacuum-ish"}},
    "ids_not_increasing": {"table": "levels", "index": 1, "set": {"id": 1}},
    "unknown_table": {"append_row": {"table": "colours", "row": {"id": 1}}},
    "truncated": {"drop_checksum": True},
    "not_a_store_file": {"raw": "spectrum,configuration,term,j,energy_cm1\nLi I,1s2.2s,2S,1/2,0\n"},
    "empty": {"raw": ""},
    "future_version": {"header": {"version": 99}},
    "fifo": {"special": "fifo"},
    "directory": {"special": "directory"},
    "gzip_damaged": {"raw": "not gzip at all\n", "suffix": ".jsonl.gz"},
}
for name, recipe in STORE.items():
    js("store", f"{name}.json", recipe)

# ----------------------------------------------------------------- command line
# placeholders: {db} store URL, {store_file} SQLite file (SQLite only), {tmp} a scratch folder, {peaks} a good
# peaks file, {fifo} a named pipe, {levels_file} a good levels file, {null_device} a private null device node
# ({tmp}/null, made with mknod: a test of broken code must never replace the system's /dev/null)
CLI = {
    "max_store_gb_nan": ["hydrogenic", "H I", "--max-store-gb", "nan"],
    "max_store_gb_inf": ["hydrogenic", "H I", "--max-store-gb", "inf"],
    "max_store_gb_1e300": ["hydrogenic", "H I", "--max-store-gb", "1e300"],
    "mass_number_zero": ["hydrogenic", "H I", "--mass-number", "0"],
    "candidates_zero": ["identify", "Li I", "{peaks}", "--candidates", "0"],
    "output_is_the_store": ["show", "Li I", "--format", "csv", "--output", "{store_file}"],
    "output_is_the_wal_file": ["show", "Li I", "--format", "csv", "--output", "{store_file}-wal"],
    "output_links_to_the_store": ["show", "Li I", "--format", "csv", "--output", "{tmp}/link-to-store"],
    "plot_is_the_store": ["emission", "Li I", "--te", "1eV", "--ne", "1e18m-3", "--plot", "{store_file}"],
    "export_store_onto_the_store": ["export-store", "{store_file}"],
    "output_is_a_null_device": ["lines", "Li I", "--format", "csv", "--output", "{null_device}"],
    "output_links_to_a_device": ["species", "--format", "json", "--output", "{tmp}/link-to-null"],
    "output_is_a_directory": ["show", "Li I", "--format", "csv", "--output", "{tmp}"],
    "from_negative": ["lines", "Li I", "--from", "-5nm"],
    "from_above_to": ["lines", "Li I", "--from", "700nm", "--to", "400nm"],
    "from_arabic_indic_digits": ["lines", "Li I", "--from", "٤٠٠nm"],
    "to_without_unit": ["emission", "Li I", "--te", "1eV", "--ne", "1e18m-3", "--to", "700"],
    "min_a_nan": ["lines", "Li I", "--min-a", "nan"],
    "limit_zero": ["lines", "Li I", "--limit", "0"],
    "import_a_fifo": ["import", "{fifo}"],
    "identify_a_fifo": ["identify", "Li I", "{fifo}"],
    "import_store_a_fifo": ["import-store", "{fifo}"],
    "import_dev_zero": ["import", "/dev/zero"],
    "import_sample_with_escape": ["import", "{levels_file}", "--sample", f"cell{ESC}[2J"],
    "import_dataset_too_long": ["import", "{levels_file}", "--dataset", "d" * 201],
    "isotope_not_stored": ["show", "6Li I"],
    "automatic_dataset_name_too_long": ["import", "{levels_file}", "--sample", "s" * 190],
    "read_on_a_mistyped_path": ["--db", "{tmp}/no-such-folder/lab.sqlite", "show", "Li I"],
    "points_one": ["emission", "Li I", "--te", "1eV", "--ne", "1e18m-3", "--points", "1"],
    "tolerance_without_unit": ["identify", "Li I", "{peaks}", "--tolerance", "0.01"],
}
for name, args in CLI.items():
    js("cli", f"{name}.json", args)
