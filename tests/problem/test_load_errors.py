"""Every class of bad problem file is refused with a message naming the YAML path, what was
expected and what was found.

All tests here are invariants of the loader's contract (a bad input gives a ConfigError
whose message carries the path and the value found); the assertions check the variable part
of each message, not its wording.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from optifin.errors import ConfigError, OptifinError
from optifin.problem import load_problem, load_problem_text, problem_from_mapping

from ._edit import DELETE, problems, put


def only(doc) -> str:
    found = problems(doc)
    assert len(found) == 1, found
    return found[0]


# (fixture, [(path, value), ...], [fragments the one error message must contain])
CASES = {
    "unknown key with hint": (
        "full",
        [("variables.fin_thicknes", "1 mm")],
        ["variables.fin_thicknes: unknown key", "did you mean 'fin_thickness'?"],
    ),
    "unknown top-level key": (
        "full",
        [("objectivs", ["mass"])],
        ["objectivs: unknown key", "'objectives'"],
    ),
    "unknown key deep in a source": (
        "full",
        [("heat_load.sources.0.powr", "3 W")],
        ["heat_load.sources[0].powr: unknown key", "'power'"],
    ),
    "unknown key in a range": (
        "full",
        [("variables.fin_height.stp", "1 mm")],
        ["variables.fin_height.stp: unknown key", "'step'"],
    ),
    "unknown key without a near match lists the keys": (
        "full",
        [("ambient.zzzz", 1)],
        ["ambient.zzzz: unknown key", "temperature, altitude"],
    ),
    "wrong dimension": (
        "full",
        [("cooling.approach_velocity", "3 kg")],
        ["cooling.approach_velocity: '3 kg' is not a velocity", "400 LFM"],
    ),
    "wrong dimension of a length": (
        "full",
        [("envelope.max_width", "100 W")],
        ["envelope.max_width: '100 W'", "length"],
    ),
    "unreadable quantity": (
        "full",
        [("variables.base_thickness.min", "three mm")],
        ["variables.base_thickness.min:", "'three mm'"],
    ),
    "bare number for a temperature": (
        "full",
        [("ambient.temperature", 35)],
        ["ambient.temperature: a bare number 35 has no unit", "degC"],
    ),
    "bare number string": (
        "full",
        [("heat_load.sources.0.footprint", ["40", "30 mm"])],
        ["heat_load.sources[0].footprint[0]: a bare number '40' has no unit"],
    ),
    "bare number in a range": (
        "full",
        [("variables.fin_thickness.step", 0.1)],
        ["variables.fin_thickness.step: a bare number 0.1 has no unit"],
    ),
    "empty range": (
        "full",
        [("variables.fin_height", {"min": "30 mm", "max": "20 mm"})],
        ["variables.fin_height: empty range, min 30 mm > max 20 mm"],
    ),
    "empty integer range": (
        "full",
        [("variables.fin_count", {"min": 30, "max": 20})],
        ["variables.fin_count: empty range, min 30 > max 20"],
    ),
    "range without max": (
        "full",
        [("variables.fin_height", {"min": "30 mm"})],
        ["variables.fin_height.max: missing"],
    ),
    "zero step": (
        "full",
        [("variables.length.step", "0 mm")],
        ["variables.length.step: must be positive, found 0 mm"],
    ),
    "negative step": (
        "full",
        [("variables.fin_height.step", "-1 mm")],
        ["variables.fin_height.step: must be positive, found -1 mm"],
    ),
    "step larger than the range": (
        "full",
        [("variables.length.step", "50 mm")],
        ["variables.length.step: 50 mm is larger than the range 40 mm to 80 mm"],
    ),
    "step on an integer": (
        "full",
        [("variables.fin_count.step", 2)],
        ["variables.fin_count.step: unknown key"],
    ),
    "negative power": (
        "full",
        [("heat_load.sources.0.power", "-5 W")],
        ["heat_load.sources[0].power: must be positive, found -5 W"],
    ),
    "zero power": (
        "full",
        [("heat_load.sources.1.power", "0 W")],
        ["heat_load.sources[1].power: must be positive, found 0 W"],
    ),
    "zero footprint": (
        "full",
        [("heat_load.sources.1.footprint", ["0 mm", "20 mm"])],
        ["heat_load.sources[1].footprint[0]: must be positive, found 0 mm"],
    ),
    "footprint not a pair": (
        "full",
        [("heat_load.sources.1.footprint", ["20 mm"])],
        ["heat_load.sources[1].footprint: expected two values", "a list of 1"],
    ),
    "negative interface resistance": (
        "full",
        [("heat_load.sources.0.interface_resistance", "-0.1 K/W")],
        ["heat_load.sources[0].interface_resistance: must not be negative, found -0.1 K/W"],
    ),
    "both interface resistances": (
        "full",
        [("heat_load.sources.0.interface_resistance_per_area", "0.3 K*cm^2/W")],
        ["heat_load.sources[0]: give interface_resistance or interface_resistance_per_area"],
    ),
    "no sources": ("full", [("heat_load.sources", [])], ["heat_load.sources:", "found 0"]),
    "duplicate source names": (
        "full",
        [("heat_load.sources.1.name", "igbt")],
        ["heat_load.sources[1].name: 'igbt' is also the name of heat_load.sources[0]"],
    ),
    "single-source keys beside sources": (
        "full",
        [("heat_load.power", "3 W")],
        ["heat_load.power: give it under each entry"],
    ),
    "width range entirely above the envelope": (
        "full",
        [("variables.width", {"min": "120 mm", "max": "150 mm"})],
        ["variables.width: the range 120 mm to 150 mm is above envelope.max_width 100 mm"],
    ),
    "fixed length above the envelope": (
        "full",
        [("variables.length", "90 mm")],
        ["variables.length: 90 mm is above envelope.max_length 80 mm"],
    ),
    "base plus fins above max_height": (
        "full",
        [("envelope.max_height", "12 mm")],
        ["envelope.max_height: 12 mm", "base_thickness 3 mm + fin_height 10 mm = 13 mm"],
    ),
    "fins do not fit across": (
        "full",
        [("variables.fin_count", {"min": 200, "max": 300})],
        ["variables.fin_count: 200 fins of at least 0.8 mm take 160 mm", "100 mm"],
    ),
    "footprint wider than the widest base": (
        "full",
        [("heat_load.sources.0.footprint", ["120 mm", "30 mm"])],
        ["heat_load.sources[0].footprint: 120 mm across", "100 mm"],
    ),
    "footprint longer than the longest base": (
        "full",
        [("heat_load.sources.0.footprint", ["40 mm", "90 mm"])],
        ["heat_load.sources[0].footprint: 90 mm along", "80 mm"],
    ),
    "source overhangs the base edge": (
        "full",
        [("heat_load.sources.0.position", ["10 mm", "40 mm"])],
        ["heat_load.sources[0].position: centre 10 mm across", "20 mm"],
    ),
    "source beyond the largest base": (
        "full",
        [("heat_load.sources.0.position", ["50 mm", "70 mm"])],
        ["heat_load.sources[0].position: the source reaches 85 mm along", "80 mm"],
    ),
    "width missing without envelope": (
        "natural",
        [("envelope.max_width", DELETE)],
        ["variables.width: missing", "max_width"],
    ),
    "temperature limit below ambient": (
        "full",
        [("constraints.max_base_temperature", "30 degC")],
        ["constraints.max_base_temperature: 30 degC is not above the ambient temperature 35 degC"],
    ),
    "temperature limit equal to ambient": (
        "full",
        [("constraints.max_source_temperature", "308.15 K")],
        ["constraints.max_source_temperature: 308.15 K is not above", "35 degC"],
    ),
    "temperature below absolute zero": (
        "full",
        [("ambient.temperature", "-300 degC")],
        ["ambient.temperature: must be above absolute zero, found -300 degC"],
    ),
    "implausible ambient": (
        "full",
        [("ambient.temperature", "600 K")],
        ["ambient.temperature: 600 K is outside"],
    ),
    "altitude and pressure": (
        "full",
        [("ambient.pressure", "85 kPa")],
        ["ambient: give altitude or pressure"],
    ),
    "altitude too high for the air tables": (
        "full",
        [("ambient.altitude", "30 km")],
        ["ambient.altitude: 30 km gives", "kPa"],
    ),
    "altitude outside the standard atmosphere": (
        "full",
        [("ambient.altitude", "60 km")],
        ["ambient.altitude: 60 km is outside"],
    ),
    "pressure outside the air tables": (
        "natural",
        [("ambient.pressure", "5 kPa")],
        ["ambient.pressure: 5 kPa is outside"],
    ),
    "forced with both flows": (
        "full",
        [("cooling.volumetric_flow", "20 CFM")],
        ["cooling: mode forced needs exactly one of", "found both"],
    ),
    "forced with no flow": (
        "full",
        [("cooling.approach_velocity", DELETE)],
        ["cooling: mode forced needs exactly one of", "found neither"],
    ),
    "flow in natural mode": (
        "natural",
        [("cooling.volumetric_flow", "20 CFM")],
        ["cooling.volumetric_flow: not used when mode is natural"],
    ),
    "unknown cooling mode": (
        "full",
        [("cooling.mode", "forcd")],
        ["cooling.mode: expected one of forced, natural, found 'forcd'", "'forced'"],
    ),
    "radiation not a bool": (
        "full",
        [("cooling.radiation", "yes")],
        ["cooling.radiation: expected true or false, found 'yes'"],
    ),
    "duplicate objectives": (
        "full",
        [("objectives", ["mass", {"mass": "maximise"}])],
        ["objectives[1]: 'mass' is listed twice"],
    ),
    "zero objectives": ("full", [("objectives", [])], ["objectives:", "found 0"]),
    "five objectives": (
        "full",
        [("objectives", ["mass", "volume", "total_cost", "fan_power", "heat_rate"])],
        ["objectives:", "found 5"],
    ),
    "unknown objective": (
        "full",
        [("objectives", ["thermal_resistence"])],
        ["objectives[0]:", "'thermal_resistence'", "'thermal_resistance'"],
    ),
    "unknown sense": (
        "full",
        [("objectives", [{"mass": "smallest"}])],
        ["objectives[0].mass: expected minimise or maximise, found 'smallest'"],
    ),
    "objective mapping with two keys": (
        "full",
        [("objectives", [{"mass": "minimise", "volume": "minimise"}])],
        ["objectives[0]:", "a mapping with 2 keys"],
    ),
    "objectives not a list": (
        "full",
        [("objectives", "mass")],
        ["objectives: expected a list", "'mass'"],
    ),
    "heat_rate without a temperature limit": (
        "natural",
        [("objectives", ["heat_rate"])],
        ["objectives[0]: heat_rate needs a temperature limit"],
    ),
    "pressure_drop objective in natural": (
        "natural",
        [("objectives", ["thermal_resistance", "pressure_drop"])],
        ["objectives[1]: pressure_drop is not defined in natural convection"],
    ),
    "fan_power objective in natural": (
        "natural",
        [("objectives", ["fan_power"])],
        ["objectives[0]: fan_power is not defined in natural convection"],
    ),
    "pressure limit in natural": (
        "natural",
        [("constraints.max_pressure_drop", "10 Pa")],
        ["constraints.max_pressure_drop: not defined in natural convection"],
    ),
    "unknown constraint": (
        "full",
        [("constraints.max_base_temp", "90 degC")],
        ["constraints.max_base_temp: unknown key", "'max_base_temperature'"],
    ),
    "negative mass limit": (
        "full",
        [("constraints.max_mass", "-1 kg")],
        ["constraints.max_mass: must be positive, found -1 kg"],
    ),
    "cost in another currency": (
        "full",
        [("constraints.max_cost", "12 EUR")],
        ["constraints.max_cost: money must be in USD, found '12 EUR'"],
    ),
    "unknown material": (
        "full",
        [("variables.material", "al_6036_t5")],
        ["variables.material: unknown material 'al_6036_t5'", "'al_6063_t5'"],
    ),
    "unknown process in choices": (
        "full",
        [("variables.process.choices", ["extrusion", "skivd"])],
        ["variables.process.choices[1]: unknown process 'skivd'", "'skived'"],
    ),
    "unknown finish": (
        "full",
        [("variables.finish", "anodized")],
        ["variables.finish: unknown finish 'anodized'", "'anodised'"],
    ),
    "choice listed twice": (
        "full",
        [("variables.material", ["cu_c11000", "cu_c11000"])],
        ["variables.material[1]: 'cu_c11000' is listed twice"],
    ),
    "no material the process can make": (
        "full",
        [("variables.material", "cu_c11000"), ("variables.process", "extrusion")],
        [
            "variables.process: no process among extrusion",
            "cu_c11000",
            "extrusion makes al_6063_t5",
        ],
    ),
    "fin count below 2": (
        "full",
        [("variables.fin_count", 1)],
        ["variables.fin_count: must be at least 2, found 1"],
    ),
    "fin count not an integer": (
        "full",
        [("variables.fin_count", 12.5)],
        ["variables.fin_count:", "found 12.5"],
    ),
    "fin count as a string": (
        "full",
        [("variables.fin_count", "20")],
        ["variables.fin_count:", "found '20'"],
    ),
    "material missing": ("full", [("variables.material", DELETE)], ["variables.material: missing"]),
    "library override with a bad value": (
        "full",
        [("materials.cu_c11000.price", "-3 USD/kg")],
        ["materials.cu_c11000.price: must be positive, found -3 USD/kg"],
    ),
    "library override with an unknown field": (
        "full",
        [("materials.cu_c11000.pricee", "3 USD/kg")],
        ["materials.cu_c11000.pricee: unknown key", "'price'"],
    ),
    "library override of a misspelt key": (
        "full",
        [("materials.cu_c1100", {"price": "3 USD/kg"})],
        ["materials.cu_c1100: not in the library", "'cu_c11000'", "conductivity"],
    ),
    "process override with wrong unit": (
        "full",
        [("processes.extrusion.min_gap", "2 kg")],
        ["processes.extrusion.min_gap: '2 kg' is not a length"],
    ),
    "process override lists an unknown material": (
        "full",
        [("processes.extrusion.materials", ["al_6063_t5", "al_6036"])],
        ["processes.extrusion.materials[1]: unknown material 'al_6036'"],
    ),
    "population too small": (
        "full",
        [("search.population", 2)],
        ["search.population: must be at least 4, found 2"],
    ),
    "evaluations below population": (
        "full",
        [("search.evaluations", 50)],
        ["search.evaluations: 50 is fewer than the population 100"],
    ),
    "default evaluations below population": (
        "full",
        [("search.evaluations", DELETE), ("search.population", 30000)],
        ["search.evaluations: 20000 (the default) is fewer than the population 30000"],
    ),
    "negative seed": ("full", [("search.seed", -1)], ["search.seed: must be at least 0, found -1"]),
    "unknown algorithm": (
        "full",
        [("search.algorithm", "nsga4")],
        ["search.algorithm:", "found 'nsga4'"],
    ),
    "exact with a continuous variable": (
        "full",
        [("search.algorithm", "exact")],
        ["search.algorithm: exact needs", "variables.base_thickness"],
    ),
    "exact grid too large": (
        "full",
        [
            ("search.algorithm", "exact"),
            ("variables.base_thickness.step", "0.1 mm"),
            ("search.exact_limit", 1000),
        ],
        ["search.algorithm: exact would evaluate", "search.exact_limit 1000"],
    ),
    "quantity zero": (
        "full",
        [("production.quantity", 0)],
        ["production.quantity: must be at least 1, found 0"],
    ),
    "bad name": ("full", [("name", "bad name!")], ["name: expected a name", "found 'bad name!'"]),
    "bad model option": (
        "full",
        [("model.spreading", "song_lee_au")],
        ["model.spreading:", "found 'song_lee_au'", "'song_lee_au_1994'"],
    ),
    "section not a mapping": (
        "full",
        [("envelope", ["100 mm"])],
        ["envelope: expected a mapping", "a list of 1"],
    ),
    "empty section": (
        "full",
        [("production", None)],
        ["production: expected a mapping", "found nothing"],
    ),
    "non-text key": ("full", [("variables.5", "x")], ["variables: key 5 is not text"]),
    "missing required section": (
        "full",
        [("ambient", DELETE)],
        ["ambient: missing", "temperature"],
    ),
    "missing temperature": (
        "full",
        [("ambient.temperature", DELETE)],
        ["ambient.temperature: missing", "degC"],
    ),
    "missing cooling mode": ("full", [("cooling.mode", DELETE)], ["cooling.mode: missing"]),
}


@pytest.mark.parametrize("case", list(CASES), ids=list(CASES))
def test_bad_input_is_reported_with_path_and_value(case, full, natural):
    """Invariant: one bad entry gives one error naming the YAML path and what was found."""
    which, changes, fragments = CASES[case]
    doc = full if which == "full" else natural
    for path, value in changes:
        if path == "variables.5":
            doc["variables"][5] = value
            continue
        put(doc, path, value)
    message = only(doc)
    for fragment in fragments:
        assert fragment in message, (fragment, message)


def test_several_errors_are_reported_together(full):
    """Invariant: every error of a file is listed in one ConfigError."""
    put(full, "variables.fin_thicknes", "1 mm")
    put(full, "cooling.approach_velocity", "3 kg")
    put(full, "variables.fin_height", {"min": "30 mm", "max": "20 mm"})
    put(full, "heat_load.sources.0.power", "-5 W")
    put(full, "objectives", ["mass", "mass"])
    put(full, "search.seed", "one")
    found = problems(full)
    assert len(found) == 6, found
    paths = {p.split(":")[0] for p in found}
    assert paths == {
        "variables.fin_thicknes",
        "heat_load.sources[0].power",
        "cooling.approach_velocity",
        "variables.fin_height",
        "objectives[1]",
        "search.seed",
    }
    with pytest.raises(ConfigError) as info:
        problem_from_mapping(full, "bad.yaml")
    assert str(info.value).startswith("bad.yaml: 6 errors\n  - ")


def test_an_invalid_value_does_not_cause_follow_on_errors(full):
    """Invariant: a wrong flow is reported once, not again as "no flow given"."""
    put(full, "cooling.approach_velocity", "fast")
    assert only(full).startswith("cooling.approach_velocity:")


@pytest.mark.parametrize(
    ("text", "fragments"),
    [
        ("heat_load: [1, 2\n", ["YAML syntax error at line 2", "expected ','"]),
        ("ambient:\n  temperature: 1\n bad: 2\n", ["YAML syntax error at line 3"]),
        ("a: 1\n\tb: 2\n", ["YAML syntax error at line 2"]),
        ("when: 2024-13-45\n", ["cannot read the YAML", "month"]),
        ("!!python/object/apply:os.system ['true']\n", ["YAML syntax error", "python/object"]),
        ("- a\n- b\n", ["top level: expected a mapping of sections", "list"]),
        ("", ["top level:", "an empty file"]),
        ("just text\n", ["top level:", "found 'just text'"]),
    ],
)
def test_unreadable_yaml(text, fragments):
    """Invariant: a YAML syntax error names its line; a non-mapping document is refused."""
    with pytest.raises(ConfigError) as info:
        load_problem_text(text, source="t.yaml")
    message = str(info.value)
    assert message.startswith("t.yaml: ")
    for fragment in fragments:
        assert fragment in message, (fragment, message)


def test_duplicate_keys_are_reported(tmp_path):
    """Invariant: a key given twice is an error (safe_load alone would keep the last)."""
    text = (
        "ambient:\n  temperature: '35 degC'\n  temperature: '40 degC'\ncooling: {mode: natural}\n"
    )
    with pytest.raises(ConfigError) as info:
        load_problem_text(text)
    assert any(
        p.startswith("ambient.temperature: key given twice (lines 2 and 3)")
        for p in info.value.problems
    ), info.value.problems


def test_file_errors(tmp_path):
    """Invariant: a missing file, a folder and non-UTF-8 bytes are ConfigErrors."""
    for path, fragment in [
        (tmp_path / "missing.yaml", "file not found"),
        (tmp_path, "is a directory"),
    ]:
        with pytest.raises(ConfigError, match=fragment):
            load_problem(path)
    binary = tmp_path / "binary.yaml"
    binary.write_bytes(b"name: \xff\xfe\n")
    with pytest.raises(ConfigError, match="not UTF-8"):
        load_problem(binary)


def test_unreadable_file(tmp_path, monkeypatch):
    """Invariant: a file without read permission is a ConfigError (simulated, since root
    can read anything)."""
    path = tmp_path / "locked.yaml"
    path.write_text("name: x\n")

    def refuse(self, *args, **kwargs):
        raise PermissionError(13, "Permission denied", str(self))

    monkeypatch.setattr(Path, "read_text", refuse)
    with pytest.raises(ConfigError, match="permission denied") as info:
        load_problem(path)
    assert info.value.source == str(path)


def test_yaml_error_in_a_file_names_the_file(tmp_path):
    """Invariant: the file's path heads the message and the line number is given."""
    path = tmp_path / "broken.yaml"
    path.write_text("ambient:\n  temperature: '35 degC\n")
    with pytest.raises(ConfigError) as info:
        load_problem(path)
    assert str(info.value).startswith(f"{path}: YAML syntax error at line")


def test_library_error_becomes_a_config_error(full):
    """Invariant: an override the library refuses (a joined-fin process without a joint
    resistance) is reported as a ConfigError entry with its path."""
    put(full, "processes.extrusion.monolithic", False)
    assert only(full) == ("processes.extrusion: a process that joins fins needs joint_resistance")


def test_an_override_can_add_a_finish(full):
    """Invariant: a finish defined under materials becomes a valid choice."""
    put(full, "materials.al_6063_t5.emissivity", {"black": 0.9})
    put(full, "variables.finish", "black")
    put(full, "variables.material", "al_6063_t5")
    problem = problem_from_mapping(full, "x.yaml")
    assert problem.variable("finish").choices == ("black",)
    put(full, "variables.material", "cu_c11000")
    put(full, "variables.process", "skived")
    assert "variables.finish: no finish among black" in only(full)


def test_errors_are_optifin_errors(full):
    """Invariant: the CLI's catch-all works: ConfigError is an OptifinError."""
    put(full, "ambient", DELETE)
    with pytest.raises(OptifinError):
        problem_from_mapping(full, "x")
