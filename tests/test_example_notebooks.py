"""The example calc notebooks: at least three, each stating its question, inputs, assumptions
and the cautions. (Their execution against stored outputs is nbval's job: see pyproject.)"""

from pathlib import Path

import nbformat

NOTEBOOKS = sorted((Path(__file__).resolve().parents[1] / "example_notebooks").glob("*.ipynb"))


def test_there_are_at_least_three_examples():
    assert len(NOTEBOOKS) >= 3


def test_each_states_question_inputs_assumptions_and_cautions():
    for path in NOTEBOOKS:
        nb = nbformat.read(path, as_version=4)
        text = "\n".join(c.source for c in nb.cells if c.cell_type == "markdown")
        for needed in ("**Question.**", "**Inputs**", "**Assumptions.**", "qualified engineer",
                       "local codes"):
            assert needed in text, (path.name, needed)
        outputs = [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", [])]
        assert outputs and not [o for o in outputs if o.output_type == "error"], path.name
