"""An app's table heading wrapped in a narrow column keeps its lines together: in the
HTML widget's line height (28 px) the critical-load path's "share of the cuts [%]" read
as five rows, one word each (seen in chromium at 1,000 px with the file browser open)."""
import re

import pandas as pd

from workbench.ui.controls_table import table_html


def test_headings_at_the_texts_own_spacing_at_the_foot_of_their_row():
    text = table_html(pd.DataFrame({"share of the cuts [%]": [5.0], "S deposition": [600.0]}))
    rule = re.search(r"\.wb-table th \{([^}]*)\}", text).group(1)
    height = re.search(r"line-height: ([\d.]+);", rule)
    assert height and float(height.group(1)) <= 1.4, rule      # a unitless multiple
    assert "vertical-align: bottom" in rule
