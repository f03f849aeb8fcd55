"""Write demo/greenhouse.ipynb: the demo notebook, clean (no outputs), with fixed cell ids.

Run ``python demo/build_notebook.py`` after editing the cells below; commit both files.
"""

from __future__ import annotations

from pathlib import Path

import nbformat
from nbformat.v4 import new_code_cell, new_markdown_cell, new_notebook

NOTEBOOK = Path(__file__).resolve().parent / "greenhouse.ipynb"

SCENARIO = """\
# Polyadic demo: an invented research greenhouse

The data in this notebook is made up. A fictional research greenhouse logs one row every
10 minutes, for about six weeks:

* **air temperature**, following the day and warmed by sunshine;
* **two humidity sensors** hanging side by side in the same air, so they read the same humidity
  up to a little sensor noise;
* **leaf wetness**, which rises when the air gets close to saturation;
* **light**, with clouds passing by, and **CO2**, drawn down by the plants in daylight and
  flushed out by the fan;
* **soil moisture** in three beds (beds 1 and 2 are on the drip line, bed 3 is watered by hand);
* the irrigation **valve command**, the **flow meter** on the drip line, and a **leak alarm**;
* the **fan** state, and three columns of pure noise (a spare input with nothing connected,
  the logger's timing jitter, and the zone a visitor badge was last seen in).

During these weeks the drip line was under a commissioning test: in about half of the
10-minute slots a test rig forced the line into the opposite state, independently of what the
controller commanded. So the flow meter alone tells nothing about the valve command. The leak
alarm fires when command and flow disagree (with a few false and missed alarms), so it tells
nothing about either of them alone either. Only the three together carry information: that is
**synergy**, a structure no pairwise view shows.

The two humidity sensors are the opposite case: each tells almost everything the other does.
That is **redundancy**.
"""

LOAD = """\
from pathlib import Path

import pandas as pd

import polyadic  # registers the kernel side of the Polyadic panel
import generate  # demo/generate.py, beside this notebook

data_file = Path("data") / "greenhouse.csv"
if not data_file.exists():
    generate.write(generate.generate(), data_file)

# The timestamp becomes the index: it orders the rows but is not one of the measured variables.
greenhouse = pd.read_csv(data_file, parse_dates=["timestamp"], index_col="timestamp")
greenhouse.head()
"""

DESCRIBE = "greenhouse.describe()"

NEXT = """\
## What to do next

1. Open the **Polyadic** panel in the right sidebar.
2. Pick the frame `greenhouse` and press **Run** (the default settings are fine: numeric
   columns are cut into 4 quantile bins, the yes/no and text columns are used as categories).
3. Read the two tables:
   * the **synergy table** lists the multiplets with the most negative co-information: the
     valve command, the flow meter and the leak alarm should be at the top;
   * the **redundancy table** lists the most positive: the two humidity sensors should be at
     the top.

Co-information is negative when a group of columns is synergy-dominated (the group says more
together than its parts do) and positive when it is redundancy-dominated (the parts repeat each
other).

After a run, the multiplet table is also available here, as a pandas DataFrame:
"""

RESULTS = """\
# Run this cell after pressing Run in the Polyadic panel.
try:
    multiplets = polyadic.results()
except polyadic.ResultsNotFound as reason:
    print(reason)
else:
    display(multiplets.sort_values("co_information").head(10))
"""


def build() -> nbformat.NotebookNode:
    """The notebook, with fixed cell ids so rebuilding gives the same file."""
    cells = [
        new_markdown_cell(SCENARIO, id="scenario"),
        new_code_cell(LOAD, id="load"),
        new_code_cell(DESCRIBE, id="describe"),
        new_markdown_cell(NEXT, id="next-steps"),
        new_code_cell(RESULTS, id="results"),
    ]
    notebook = new_notebook(
        cells=cells,
        metadata={
            "kernelspec": {"name": "python3", "display_name": "Python 3 (ipykernel)", "language": "python"},
            "language_info": {"name": "python"},
        },
    )
    nbformat.validate(notebook)
    return notebook


def main() -> int:
    """Write the notebook beside this script."""
    nbformat.write(build(), NOTEBOOK)
    print(f"wrote {NOTEBOOK}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
