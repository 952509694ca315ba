"""Example input files for the ISE workflow, written into a folder for a newcomer to start from.

The numbers are the invented teaching-lab scenario of :mod:`activity.workflows.ise.demo`
(no real laboratory, person or product); every file says so in a comment or label.
"""

from __future__ import annotations

from pathlib import Path

from ...errors import InputError

__all__ = ["EXAMPLES", "write_examples"]

EXAMPLES = {
    "standards.csv": """label,Ca2+ [mol/L],K+ [mol/L],Cl- [mol/L],temperature [°C],reading [mV]
S1 (invented),1e-5,0.1,0.10002,25,-199.1
S2 (invented),1e-4,0.1,0.1002,25,-172.6
S3 (invented),1e-3,0.1,0.102,25,-143.5
S4 (invented),1e-2,0.1,0.12,25,-116.2
S5 (invented),1e-1,0.1,0.3,25,-89.3
""",
    "method.toml": """# Calcium electrode method (invented teaching-lab example). Units are required where a
# quantity has one; activities and selectivity coefficients are plain numbers.
title = "Calcium electrode, teaching lab bench 2 (invented example)"
ion = "Ca^2+"
model = "davies"              # activity model of the standards and samples
slope = "free"                # or "nernstian"
detection_term = "auto"       # "auto", "fit", or an activity such as 1e-7
linear_deviation = "1 mV"     # bound of the linear range (common practice)
counter_ion = "Cl-"           # added with Ca2+ when samples are read

[interferents]                # K as a number (held) or "fit"
"K+" = 1e-4                   # invented demo value

[acceptance]                  # leave out a line to keep the common-practice default
slope_min_percent = 90
slope_max_percent = 105
max_residual_sd = "1 mV"
max_drift = "1 mV/h"

[uncertainty]
reading = "0.3 mV"            # repeatability of one reading
temperature = "0.2 K"
matrix = 0.01                 # relative uncertainty of the sample matrix composition
method = "gum"                # or "monte-carlo"

[sample_matrix]               # used when samples.csv has no composition columns
temperature = "25 °C"
[sample_matrix.composition]
"K+" = "0.1 mol/L"
"Cl-" = "0.1 mol/L"
""",
    "samples.csv": """label,K+ [mol/L],Na+ [mol/L],Cl- [mol/L],temperature [°C],reading [mV]
A: tap water 1+1 (invented),0.1,0,0.1,25,-131.0
B: well water 1+1 (invented),0.1,0.01,0.11,25,-154.2
""",
    "addition.toml": """# Multiple known addition (invented readings): 50 mL of sample in 0.1 mol/L KCl,
# 0.5 mL steps of 0.01 mol/L CaCl2 made up in the same background.
sample_volume = "50 mL"
standard_concentration = "0.01 mol/L"
added_volume = ["0 mL", "0.5 mL", "1.0 mL", "1.5 mL", "2.0 mL"]
reading = ["-164.1 mV", "-159.2 mV", "-155.7 mV", "-153.0 mV", "-150.8 mV"]
slope = "calibration"         # "calibration", "fit" or "nernstian"
standard_in_matrix = true
counter_ion = "Cl-"

[matrix]
temperature = "25 °C"
[matrix.composition]
"K+" = "0.1 mol/L"
"Cl-" = "0.1 mol/L"
""",
    "selectivity.toml": """# Selectivity series (invented readings). Activities are plain numbers.
[[separate_solution]]
interferent = "Mg^2+"
primary_activity = [1e-2]
interferent_activity = [1e-2]
primary_reading = ["-102.6 mV"]
interferent_reading = ["-169.0 mV"]

[[fixed_interference]]
interferent = "Na+"
interferent_activity = 0.1
primary_activity = [1e-7, 1e-6, 1e-5, 1e-4, 1e-3, 1e-2]
reading = ["-189.1 mV", "-188.0 mV", "-180.5 mV", "-159.2 mV", "-131.4 mV", "-102.6 mV"]

[[matched_potential]]
interferent = "K+"
reference_activity = 1e-4
primary_step = 1e-4
primary_change = "8.70 mV"
interferent_added = [0.01, 0.03, 0.1, 0.3]
interferent_change = ["1.19 mV", "3.29 mV", "8.69 mV", "17.38 mV"]
""",
}

README = """Example input files of the calcium electrode workflow (invented teaching-lab data).

  activity calibrate standards.csv --method method.toml
  activity calibrate standards.csv --method method.toml --samples samples.csv --record record.html --plot cal.png
  activity calibrate standards.csv --method method.toml --save cal.json
  activity calibrate --use cal.json --method method.toml --samples samples.csv
  activity calibrate standards.csv --method method.toml --addition addition.toml --selectivity selectivity.toml
"""


def write_examples(folder: str) -> list[Path]:
    """Write the example files into ``folder`` (created if missing); refuse to overwrite.

    Every file is checked for presence first, so either all are written or none.
    """
    from ...io.files import write_text

    target = Path(folder)
    if target.exists() and not target.is_dir():
        raise InputError("not a folder", field="folder", value=str(target))
    files = dict(EXAMPLES, **{"README.txt": README})
    existing = [n for n in files if (target / n).exists()]
    if existing:
        raise InputError(
            "would overwrite existing files; choose an empty folder", field="folder", value=", ".join(existing)
        )
    target.mkdir(parents=True, exist_ok=True)
    out = []
    for name, text in files.items():
        write_text(target / name, text)
        out.append(target / name)
    return out
