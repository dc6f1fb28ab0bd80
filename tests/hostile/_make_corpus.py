# ruff: noqa: E501  (a table of cases, one per line, reads best)
"""Writes the hostile corpus (tests/hostile/*.toml) from the table below.

Run it after editing the table: ``python tests/hostile/_make_corpus.py``. Each file starts
with its expected outcome, read by tests/test_hostile.py:

    # expect: error <fragment> | <fragment>   exit 2, one line on stderr holding each fragment
    # expect: ok                              exit 0, sane outputs
    # expect: ok-or-error                     either of the above (valid but extreme input)
    # expect: warning <fragment>              exit 0 and a one-line warning holding it
    # args: envelope {model} --out {out}      the command line (default: envelope {model}
                                              --out {out} --no-figure --no-report)
    # special: fifo                           the driver builds the input (see the driver)

A text ``@@REPEAT(x|n)@@`` in a file stands for ``x`` repeated ``n`` times (expanded by the
driver before the case runs), so megabyte cases stay small in the repository.

Every scenario is invented for these tests.
# ruff: noqa: E501  (a table of cases: one case per line reads best)
"""

from __future__ import annotations

from pathlib import Path

HERE = Path(__file__).resolve().parent

BEAM = """units = "SI"
[beam]
spans = [10.0, 12.0]
supports = ["pin", "pin", "pin"]
EI = "2e5 kN*m^2"
"""
TRUCK = """[[load]]
name = "truck"
axles = [100, 150]
spacings = [3.0]
"""
CRANE = """[[crane]]
name = "C1"
capacity = "10 t"
bridge_weight = "12 t"
trolley_weight = "2 t"
span = "15 m"
hook_approach = "1 m"
wheel_spacings = ["3 m"]
operation = "cab"
[runway]
service_class = "C"
"""


def beam(spans: str = "[10.0, 12.0]", supports: str | None = None, extra: str = "",
         ei: str = 'EI = "2e5 kN*m^2"') -> str:
    count = spans.count(",") + 1
    supports = supports or "[" + ", ".join(['"pin"'] * (count + 1)) + "]"
    return f'units = "SI"\n[beam]\nspans = {spans}\nsupports = {supports}\n{ei}\n{extra}'


def load(body: str, name: str = "truck") -> str:
    return f'[[load]]\nname = "{name}"\n{body}\n'


CASES: dict[str, tuple[str, str]] = {}


def big(text: str, count: int) -> str:
    """``text * count``, written as a marker the driver expands when the case runs (keeps the
    repository small): ``@@REPEAT(text|count)@@``."""
    if len(text) * count <= 20_000:
        return text * count
    assert "|" not in text and ")@@" not in text
    return f"@@REPEAT({text}|{count})@@"


def case(name: str, expect: str, text: str, args: str | None = None,
         special: str | None = None) -> None:
    assert name not in CASES, name
    header = f"# expect: {expect}\n"
    if args:
        header += f"# args: {args}\n"
    if special:
        header += f"# special: {special}\n"
    CASES[name] = (header, text)


# --- silently wrong results: magnitudes, non-finite numbers, factor products ---------------
case("load_factor_1e308", "error load[0] | factor", BEAM + TRUCK + "load_factor = 1e308\n")
case("load_factor_1e16", "error load[0] | 10000", BEAM + TRUCK + "load_factor = 1e16\n")
case("load_factor_1e5", "error load[0] | 10000", BEAM + TRUCK + "load_factor = 1e5\n")
case("load_factor_inf", "error load[0].load_factor", BEAM + TRUCK + "load_factor = inf\n")
case("load_factor_nan", "error load[0].load_factor", BEAM + TRUCK + "load_factor = nan\n")
case("factors_overflow", "error load[0] | factor",
     BEAM + TRUCK + "factors = { a = 1e200, b = 1e200 }\n")
case("factors_product_1e6", "error load[0] | 10000",
     BEAM + TRUCK + "factors = { a = 1000, b = 1000 }\n")
case("factors_inf", "error load[0].factors.a", BEAM + TRUCK + "factors = { a = inf }\n")
case("factors_nan", "error load[0].factors.a", BEAM + TRUCK + "factors = { a = nan }\n")
case("uniform_1e308", "error load[0].uniform", BEAM + load("uniform = 1e308", "lane"))
case("uniform_1e300_string", "error load[0].uniform",
     BEAM + load('uniform = "1e300 kN/m"', "lane"))
case("uniform_1e-300", "error load[0].uniform", BEAM + load("uniform = 1e-300", "lane"))
case("point_load_1e308", "error load[0].point_load",
     BEAM + load("uniform = 10\npoint_load = 1e308", "lane"))
case("axle_1e308", "error load[0].axles[0]", BEAM + load("axles = [1e308]"))
case("axle_1e400_literal", "error load[0].axles[0]", BEAM + load('axles = ["1e400 kN"]'))
case("axle_inf", "error load[0].axles[0]", BEAM + load("axles = [inf]"))
case("axle_nan", "error load[0].axles[0]", BEAM + load("axles = [nan]"))
case("axle_1e-300", "error load[0].axles[0]", BEAM + load("axles = [1e-300]"))
case("axle_at_magnitude_limit", "ok-or-error", BEAM + load("axles = [1e15]"))
case("axle_tiny_but_valid", "ok", BEAM + load("axles = [1e-9]"))
case("spacing_1e308", "error load[0].spacings[0]", BEAM + load("axles = [1, 1]\nspacings = [1e308]"))
case("impact_1e308", "error load[0].impact", BEAM + TRUCK + "impact = 1e308\n")
case("span_inf", "error beam.spans[0]", beam("[inf]"))
case("span_nan", "error beam.spans[0]", beam("[nan]"))
case("span_1e300", "error beam.spans[0]", beam("[1e300]"))
case("span_1e-300", "error beam.spans[0]", beam("[1e-300]"))
case("span_big_integer", "error beam.spans[0]", beam("[99999999999999999999]"))
case("span_negative_zero", "error beam.spans[0]", beam("[-0.0]"))
case("EI_1e308", "error beam.EI", beam(ei="EI = 1e308"))
case("EI_1e-300", "error beam.EI", beam(ei='EI = "1e-300 kN*m^2"'))
case("E_1e400", "error beam.E", beam(ei='E = "1e400 GPa"\nI = "1 m^4"'))
case("I_1e308", "error beam.I", beam(ei='E = "200 GPa"\nI = "1e308 m^4"'))
case("spring_1e308", "error beam.supports[1].spring",
     beam(supports='["pin", {spring = 1e308}, "pin"]'))
case("spring_1e20", "error beam.supports[1].spring",
     beam(supports='["pin", {spring = "1e20 kN/m"}, "pin"]'))
case("rotational_spring_inf", "error beam.supports[0].rotational",
     beam(supports='[{spring = 1e5, rotational = inf}, "pin", "pin"]'))
case("section_at_1e308", "error sections.at[0]", BEAM + "[sections]\nat = [1e308]\n" + TRUCK)
case("hinge_1e-300", "error beam.hinges[0]", beam("[10.0, 12.0, 10.0]",
     supports='["pin", "pin", "pin", "pin"]', extra="hinges = [1e-300]"))
case("crane_capacity_1e400", "error crane[0].capacity",
     BEAM + CRANE.replace('capacity = "10 t"', 'capacity = "1e400 t"'))
case("crane_capacity_1e308_number", "error crane[0].capacity",
     BEAM + CRANE.replace('capacity = "10 t"', "capacity = 1e308"))
case("crane_bridge_weight_inf", "error crane[0].bridge_weight",
     BEAM + CRANE.replace('bridge_weight = "12 t"', "bridge_weight = inf"))
case("crane_capacity_product_overflow", "error crane[0].capacity",
     BEAM + CRANE.replace('capacity = "10 t"', 'capacity = "1e30*1e30*1e30*1e30*1e30*1e30*1e30*1e30*1e30*1e30*1e30 t"'))
case("crane_span_1e-300", "error crane[0].span",
     BEAM + CRANE.replace('span = "15 m"', "span = 1e-300"))
case("crane_wheel_spacing_1e308", "error crane[0].wheel_spacings[0]",
     BEAM + CRANE.replace('wheel_spacings = ["3 m"]', "wheel_spacings = [1e308]"))
case("section_modulus_1e400", "error runway.section_modulus",
     BEAM + CRANE + 'section_modulus = "1e400 cm^3"\ndetail_category = "B"\n')
case("section_modulus_1e90", "error runway.section_modulus",
     BEAM + CRANE + 'section_modulus = "1e30*1e30*1e30 m^3"\ndetail_category = "B"\n')
case("lateral_EI_1e308", "error runway.lateral_EI", BEAM + CRANE + "lateral_EI = 1e308\n")
case("fatigue_cycles_1e308", "ok-or-error",
     BEAM + CRANE + 'section_modulus = "3000 cm^3"\ndetail_category = "B"\n'
     "fatigue_cycles = 1e308\n")
case("vertical_limit_1e308", "ok-or-error", BEAM + CRANE + "vertical_limit = 1e308\n")

# --- tracebacks: nesting, recursion, extreme ratios, $ in text ------------------------------
case("deep_arrays_100000", "error nested", "a = " + big("[", 100_000) + big("]", 100_000) + "\n")
case("deep_inline_tables", "error nested", "a = " + big("{b = ", 2000) + "1" + big("}", 2000) + "\n")
case("deep_axles_array", "error nested", BEAM + load("axles = " + "[" * 60 + "1" + "]" * 60))
case("deep_dotted_keys", "error nested", BEAM + "x" + ".x" * 200 + " = 1\n")
case("deep_table_header", "error nested", BEAM + "[" + ".".join(["t"] * 200) + "]\n")
case("deep_array_of_tables_header", "error nested",
     BEAM + "[[" + ".".join(["t"] * 100) + "]]\n")
case("nested_33_arrays", "error nested", "a = " + "[" * 33 + "]" * 33 + "\n")
case("nested_20_arrays_valid_toml", "error", "a = " + "[" * 20 + "]" * 20 + "\n")
case("loadmodel_lists_itself", "error self_train | refer", BEAM + '[[load]]\nuse = "parts/self_train.toml"\n')
case("loadmodel_cycle_of_two", "error cycle_a | refer", BEAM + '[[load]]\nuse = "parts/cycle_a.toml"\n')
case("loadmodel_deeply_nested", "error parts/deep.toml | nested", BEAM + '[[load]]\nuse = "parts/deep.toml"\n')
case("span_ratio_1e9", "error beam.spans", beam("[1e-6, 1000.0]") + TRUCK)
case("span_ratio_1e6", "ok-or-error", beam("[0.001, 1000.0]") + TRUCK)
case("dollar_in_title_figures", "ok", 'title = "Cost $\\\\frac{a$ girder"\n' + BEAM + TRUCK,
     args="envelope {model} --out {out}")
case("dollar_in_load_name_figures", "ok", BEAM + load("axles = [100]", "$\\\\alpha$ truck"),
     args="envelope {model} --out {out}")
case("backslash_in_title_figures", "ok", 'title = "C:\\\\temp\\\\n \\\\alpha x"\n' + BEAM + TRUCK,
     args="envelope {model} --out {out}")
case("dollar_in_title_lines_figure", "ok", 'title = "$x$ and $\\\\frac{$"\n' + BEAM,
     args="lines {model} --out {out}")
case("dollar_in_crane_name", "ok", BEAM + CRANE.replace('name = "C1"', 'name = "$C_1$"'),
     args="envelope {model} --out {out} --no-report")
case("single_dollar_title", "ok", 'title = "$ 5 per tonne"\n' + BEAM + TRUCK,
     args="envelope {model} --out {out}")

# --- sizes: counts beyond the documented limits ---------------------------------------------
many = lambda n, item: "[" + ", ".join([item] * n) + "]"  # noqa: E731
case("spans_10000", "error beam.spans | 200", beam("[" + big("1.0, ", 9999) + "1.0]",
     supports="[" + big('"pin", ', 10000) + '"pin"]'), args="summary {model}")
case("spans_201", "error beam.spans | 200", beam(many(201, "1.0"), supports=many(202, '"pin"')),
     args="summary {model}")
case("spans_200", "ok", beam(many(200, "5.0"), supports=many(201, '"pin"')),
     args="summary {model}")
case("hinges_201", "error beam.hinges", beam(many(200, "1.0"), supports=many(201, '"pin"'),
     extra="hinges = [" + ", ".join(f"{i + 0.5}" for i in range(201)) + "]"),
     args="summary {model}")
case("stiffness_segments_3000", "error beam.stiffness", beam("[3000.0]", ei="") +
     big("[[beam.stiffness]]\nEI = 1e5\n", 3000),
     args="summary {model}")
case("sections_every_1e-7", "error sections.every | 5,000", BEAM + '[sections]\nevery = "1e-7 m"\n'
     + TRUCK)
case("sections_every_1mm", "error sections.every", BEAM + '[sections]\nevery = "1 mm"\n' + TRUCK)
case("sections_at_6000", "error sections.at", BEAM + "[sections]\nat = " +
     "[" + ", ".join(f"{i * 0.003:.4f}" for i in range(6000)) + "]\n" + TRUCK)
case("sections_at_100000", "error sections.at", BEAM + "[sections]\nat = " +
     "[" + big("1.0, ", 99_999) + "1.0]" + "\n" + TRUCK)
case("sections_every_at_limit", "ok-or-error", BEAM + '[sections]\nevery = "5 mm"\n',
     args="summary {model}")
searched = '{min = 1.0, max = 2.0}'
case("searched_50", "error load[0].spacings | searched", BEAM + load(
     f"axles = {many(51, '10')}\nspacings = {many(50, searched)}"))
case("searched_9", "error load[0].spacings | searched", BEAM + load(
     f"axles = {many(10, '10')}\nspacings = {many(9, searched)}"))
case("searched_3", "ok", BEAM + load(f"axles = {many(4, '10')}\nspacings = {many(3, searched)}"))
case("train_searched_gaps_20", "error load[0].gaps | searched", BEAM + load(
     "vehicles = " + many(21, "{axles = [10]}") + "\ngaps = " + many(20, searched), "train"))
case("haunch_divisions_1e7", "error beam.haunch_divisions | 200",
     beam(extra="haunch_divisions = 10000000"))
case("haunch_divisions_201", "error beam.haunch_divisions", beam(extra="haunch_divisions = 201"))
case("haunch_divisions_huge_int", "error beam.haunch_divisions",
     beam(extra="haunch_divisions = 999999999999999999"))
case("haunch_divisions_0", "error beam.haunch_divisions", beam(extra="haunch_divisions = 0"))
case("crane_wheels_1000", "error crane[0].wheel_spacings | 32",
     BEAM + CRANE.replace('wheel_spacings = ["3 m"]', "wheel_spacings = " + many(999, "0.01")))
case("crane_wheels_33", "error crane[0].wheel_spacings",
     BEAM + CRANE.replace('wheel_spacings = ["3 m"]', "wheel_spacings = " + many(33, "0.1")))
case("axles_300", "error load[0].axles | 200", BEAM + load(f"axles = {many(300, '1')}\n"
     f"spacings = {many(299, '0.1')}"))
case("loads_101", "error load | 100", BEAM + "".join(
     f'[[load]]\nname = "t{i}"\naxles = [10]\n' for i in range(101)))
case("train_vehicles_60", "error load[0].vehicles | 50", BEAM + load(
     "vehicles = " + many(60, "{axles = [10]}") + "\ngaps = " + many(59, "1.0"), "train"))
case("cranes_11", "error crane | 10", BEAM + "".join(
     CRANE.split("[runway]")[0].replace('name = "C1"', f'name = "C{i}"').replace(
         'operation = "cab"', 'operation = "cab"\nbuffer_length = "4 m"')
     for i in range(11)) + '[runway]\nservice_class = "C"\n')

# --- hangs: unit expressions, huge strings, special files -----------------------------------
case("unit_power_tower_span", "error beam.spans[0] | exponent", beam('["2**(2**40) m"]'))
case("unit_power_tower_EI", "error beam.EI | exponent", beam(ei='EI = "2**(2**40) kN*m^2"'))
case("unit_power_tower_uniform", "error load[0].uniform | exponent",
     BEAM + load('uniform = "2**(2**40) kN/m"', "lane"))
case("unit_power_tower_crane", "error crane[0].capacity | exponent",
     BEAM + CRANE.replace('capacity = "10 t"', 'capacity = "2**(2**40) t"'))
case("unit_power_tower_section_modulus", "error runway.section_modulus | exponent",
     BEAM + CRANE + 'section_modulus = "2**(2**40) cm^3"\ndetail_category = "B"\n')
case("unit_power_chain", "error beam.spans[0] | exponent", beam('["10**10**10 m"]'))
case("unit_nested_power", "error beam.spans[0]", beam('["((((2 m)**2)**2)**2)**2"]'))
case("unit_deep_parentheses", "error beam.spans[0] | parentheses",
     beam('["' + "(" * 50 + "1" + ")" * 50 + ' m"]'))
case("unit_long_string", "error beam.spans[0] | characters", beam('["' + "1" * 500 + ' m"]'))
case("unit_long_string_1MB", "error beam.spans[0] | characters",
     beam('["' + big("9", 1_000_000) + ' m"]'))
case("unit_at_option_power_tower", "error --at | exponent", BEAM,
     args='lines {model} --at "2**(2**40) m"')
case("unit_at_option_1e308", "error --at", BEAM, args="lines {model} --at 1e308")
case("unit_at_option_nan", "error --at", BEAM, args="lines {model} --at nan")
case("support_option_huge", "error --support", BEAM,
     args="lines {model} -e reaction --support 99999999999999999999")
case("title_2001_chars", "error title | 2,000", f'title = "{"T" * 2001}"\n' + BEAM + TRUCK)
case("title_1MB", "error title", 'title = "' + big("T", 1_000_000) + '"\n' + BEAM + TRUCK)
case("description_3MB", "error description", 'description = "' + big("d", 3_000_000) + '"\n' + BEAM,
     args="summary {model}")
case("file_50MB", "error file | MiB", "", args="summary {model}", special="huge-file")
case("load_name_100000", "error load[0].name", BEAM + load("axles = [10]", big("n", 100_000)))
case("crane_name_100000", "error crane[0].name",
     BEAM + CRANE.replace('name = "C1"', 'name = "' + big("c", 100_000) + '"'))
case("fifo_as_model", "error file | named pipe", "", args="summary {model}", special="fifo")
case("dev_zero_as_model", "error file | device", "", args="summary {model}",
     special="dev-zero")
case("dev_urandom_as_model", "error file | device", "", args="envelope {model}",
     special="dev-urandom")
case("folder_as_model", "error file | folder", "", args="summary {model}", special="folder")
case("use_fifo", "error load[0].use | named pipe", BEAM + '[[load]]\nuse = "pipe.toml"\n',
     special="use-fifo")
case("use_folder", "error load[0].use | folder", BEAM + '[[load]]\nuse = "parts/"\n')
case("use_folder_toml_name", "error load[0].use | folder",
     BEAM + '[[load]]\nuse = "parts/folder.toml"\n', special="use-folder")
case("use_symlink_to_device", "error load[0].use | outside",
     BEAM + '[[load]]\nuse = "zero.toml"\n', special="use-symlink-dev-zero")

# --- misleading messages: encodings, empty files --------------------------------------------
case("utf8_bom", "ok", BEAM + TRUCK, special="utf8-bom")
case("utf16_le_bom", "error file | UTF-16", BEAM, special="utf16")
case("utf16_be_no_bom", "error file | UTF-16", BEAM, special="utf16-be")
case("utf32", "error file | UTF-32", BEAM, special="utf32")
case("latin1_title", "error file | UTF-8", BEAM, special="latin1")
case("nul_byte", "error line", BEAM, special="nul")
case("binary_garbage", "error file", "", special="png")
case("empty_file", "error units", "", args="summary {model}")
case("only_comments", "error units", "# nothing here\n", args="summary {model}")
case("use_missing_file", "error load[0].use | existing",
     BEAM + '[[load]]\nuse = "parts/none.toml"\n')
case("use_windows_path", "error load[0].use",
     BEAM + '[[load]]\nuse = "C:\\\\Windows\\\\win.ini"\n')

# --- implausible input: warnings (wired in phase 2) -----------------------------------------
case("E_200_MPa_steel", "warning beam.E", beam(ei='E = "200 MPa"\nI = "55200 cm^4"') + TRUCK)
case("I_in_mm4", "warning beam.I", beam(ei='E = "210 GPa"\nI = "55200 mm^4"') + TRUCK)
case("span_7mm", "warning beam.spans", beam('["7.2 mm"]') + load("axles = [1]"))
case("span_1500m", "warning beam.spans", beam('["1500 m"]', ei='EI = "1e9 kN*m^2"') + TRUCK)
case("deflection_over_span_50", "warning deflection",
     beam(ei='EI = "100 kN*m^2"') + TRUCK)
case("modulus_1000_GPa", "warning beam.E", beam(ei='E = "1000 GPa"\nI = "55200 cm^4"') + TRUCK)

# --- reading outside the project ------------------------------------------------------------
for name, path, fragment in (
        ("use_etc_passwd", "/etc/passwd", "absolute"),
        ("use_home_bashrc", "~/.bashrc", "~"),
        ("use_tilde_user", "~root/.profile", "~"),
        ("use_dotdot_passwd", "../../../../../../../../etc/passwd", "outside"),
        ("use_proc_environ", "/proc/self/environ", "absolute"),
        ("use_dev_zero_absolute", "/dev/zero", "absolute"),
        ("use_outside_tree", "../test_cli.py", "outside"),
        ("use_outside_via_parts", "parts/../../conftest.py", "outside"),
        ("use_etc_hostname", "/etc/hostname", "absolute"),
        ("use_absolute_toml", "/tmp/some-load-model.toml", "absolute")):
    case(name, f"error load[0].use | {fragment}", BEAM + f'[[load]]\nuse = "{path}"\n')
case("train_vehicle_absolute", "error load[0].vehicles[0] | absolute",
     BEAM + load('vehicles = ["/etc/passwd.toml"]', "train"))
case("train_vehicle_outside", "error load[0].vehicles[0] | outside",
     BEAM + load('vehicles = ["../../README.md"]', "train"))
case("use_symlink_outside", "error load[0].use | outside",
     BEAM + '[[load]]\nuse = "passwd.toml"\n', special="use-symlink-passwd")
case("loadmodel_uses_outside", "error vehicles[0] | outside",
     BEAM + '[[load]]\nuse = "parts/reaches_out.toml"\n')

# --- spreadsheet formulas and control characters --------------------------------------------
for name, text in (("csv_hyperlink", '=HYPERLINK(\\"http://example.invalid\\",\\"x\\")'),
                   ("csv_plus", "+cmd|' /C calc'!A0"), ("csv_at", "@SUM(1+1)"),
                   ("csv_minus", "-2+3"), ("csv_tab", "\\t=1+1"), ("csv_cr", "\\r=1+1")):
    case(name, "ok", BEAM + load("axles = [100, 150]\nspacings = [3.0]", text))
case("esc_in_title", "ok", 'title = "Girder \\u001b[31mred\\u001b]0;owned\\u0007"\n' + BEAM + TRUCK)
case("esc_in_description_summary", "ok",
     'description = "\\u001b[2J\\u001b[Hcleared"\n' + BEAM, args="summary {model}")
case("nul_escape_in_title", "ok", 'title = "a\\u0000b"\n' + BEAM + TRUCK)
case("bell_backspace_in_name", "ok", BEAM + load("axles = [100]", "tr\\u0007uck\\b\\b"))
case("bidi_override_in_name", "ok", BEAM + load("axles = [100]", "\\u202etruck"))
case("cr_in_title", "ok", 'title = "line\\rover"\n' + BEAM + TRUCK)
case("newlines_in_title", "ok", 'title = """a\nb\nc"""\n' + BEAM + TRUCK)
case("esc_in_lines_title", "ok", 'title = "\\u001b[31mred"\n' + BEAM,
     args="lines {model} --out {out}")
case("csv_formula_in_crane_name", "ok",
     BEAM + CRANE.replace('name = "C1"', 'name = "=1+1"'),
     args="envelope {model} --out {out} --no-figure --no-report")

# --- output sets ----------------------------------------------------------------------------
case("out_empty_string", "error --out", BEAM + TRUCK, args='envelope {model} --out ""')
case("out_blank_string", "error --out", BEAM + TRUCK, args='envelope {model} --out " "')
case("out_is_a_file", "error --out | file", BEAM + TRUCK, special="out-is-file")
case("lines_out_empty_string", "error --out", BEAM, args='lines {model} --out ""')

# --- more of our own: structure and types ---------------------------------------------------
case("title_is_table", "error title", "title = {a = 1}\n" + BEAM)
case("units_with_nul", "error units", 'units = "SI\\u0000"\n[beam]\nspans = [1.0]\n'
     'supports = ["pin", "pin"]\nEI = 1\n')
case("spans_is_string", "error beam.spans", beam('"10 m"'))
case("span_zero_string", "error beam.spans[0]", beam('["0 m"]'))
case("spacing_range_reversed", "error load[0].spacings[0].max",
     BEAM + load("axles = [1, 1]\nspacings = [{min = 3.0, max = 2.0}]"))
case("duplicate_key", "error line", 'title = "a"\ntitle = "b"\n' + BEAM)
case("unknown_top_keys_10000", "error unknown", BEAM + "".join(f"k{i} = 1\n" for i in range(2000)))
case("long_unknown_string", "error unknown", BEAM + 'junk = "' + big("j", 1_000_000) + '"\n')
case("dollar_file_name", "ok", BEAM + TRUCK, special="dollar-name",
     args="envelope {model} --out {out}")
case("format_option_dollar", "error --format", BEAM + TRUCK,
     args="envelope {model} --out {out} --format $")
case("mass_for_axle", "error load[0].axles[0] | force", BEAM + load('axles = ["10 t"]'))
case("case_typo_M", "error beam.spans[0] | did you mean", beam('["40 M"]'))
case("case_typo_KN", "error load[0].axles[0] | did you mean", BEAM + load('axles = ["10 KN"]'))
case("knot_not_kilonewton", "error load[0].axles[0] | knot", BEAM + load('axles = ["10 kn"]'))
case("mechanism", "error beam", beam(supports='["free", "pin", "free"]'))
case("all_free", "error beam", beam(supports='["free", "free", "free"]'))
case("cantilever_fixed_free", "ok", beam("[5.0]", supports='["fixed", "free"]') + TRUCK)
case("springs_everywhere", "ok", beam(supports='[{spring = 1e5}, {spring = 1e5}, '
     '{spring = 1e5, rotational = 1e6}]') + TRUCK)
case("huge_but_valid_axle", "ok", BEAM + load("axles = [1e12]"))
case("many_sections_at_limit", "ok-or-error", BEAM + "[sections]\nat = " + "[" + ", ".join(
     f"{i * 22 / 4999:.6f}" for i in range(5000)) + "]\n", args="summary {model}")
case("crane_ok", "ok", BEAM + CRANE, args="envelope {model} --out {out} --no-report")
case("lane_load_ok", "ok", BEAM + load("uniform = 12.5", "lane"))
case("library_use_ok", "ok", BEAM + '[[load]]\nuse = "demo-service-truck"\n')
case("parts_truck_ok", "ok", BEAM + '[[load]]\nuse = "parts/truck.toml"\n')


PARTS = {
    "self_train.toml": 'units = "SI"\ndescription = "refers to itself"\nsource = "invented"\n'
                       'vehicles = ["self_train.toml"]\n',
    "cycle_a.toml": 'units = "SI"\ndescription = "a"\nsource = "invented"\n'
                    'vehicles = ["cycle_b.toml"]\n',
    "cycle_b.toml": 'units = "SI"\ndescription = "b"\nsource = "invented"\n'
                    'vehicles = ["cycle_a.toml"]\n',
    "deep.toml": 'units = "SI"\ndescription = "deep"\nsource = "invented"\naxles = '
                 + "[" * 100 + "1" + "]" * 100 + "\n",
    "truck.toml": 'units = "SI"\ndescription = "an invented two-axle truck"\n'
                  'source = "invented for these tests"\naxles = [60, 90]\nspacings = [3.5]\n',
    "reaches_out.toml": 'units = "SI"\ndescription = "reaches out"\nsource = "invented"\n'
                        'vehicles = ["../../test_cli.py"]\n',
}


def main() -> None:
    for old in HERE.glob("*.toml"):
        old.unlink()
    for name, (header, text) in CASES.items():
        (HERE / f"{name}.toml").write_text(header + text, encoding="utf-8")
    for name, text in PARTS.items():
        (HERE / "parts" / name).write_text(text, encoding="utf-8")
    print(f"{len(CASES)} cases")


if __name__ == "__main__":
    main()
