"""Headings in words, with units, of the CSV columns that report.html shows in its
tables: one mapping, used by every table of the report (the CSV name stays on the
heading as its ``title`` and a small second line, so a reader finds the column in the
file).  Units as docs/run_folder.md writes them; ``S or N`` where the row's element
says which."""
from __future__ import annotations

import html

#: CSV column name -> heading in words [unit].
COLUMN_LABELS = {
    # who and when
    "site": "Site", "receptor": "Receptor surface", "element": "Element",
    "period": "Period", "pathway": "Pathway", "species": "Species",
    "status": "Status", "note": "Note", "missing_components": "Missing components",
    "years_used": "Years used", "years_excluded": "Years excluded",
    # budget.csv
    "flux_kg_ha_yr": "Deposition [kg S or N/ha/yr]",
    "flux_eq_ha_yr": "Deposition [eq/ha/yr]",
    "flux_kg_ha": "Deposition [kg S or N/ha]",
    "flux_eq_ha": "Deposition [eq/ha]",
    "nh3_deposition_only_kg_ha": "NH3 deposition only [kg N/ha]",
    "wet_coverage_fraction": "Precipitation sampled [% of hours]",
    "air_coverage": "Air sampled, lowest species [% of hours]",
    "vd_coverage": "Vd modelled, lowest [% of hours]",
    # summary.csv: the dry-nitrogen bracket
    "dry_N_all_gas_kg_ha": "Dry N, pairs all gas [kg N/ha]",
    "dry_N_all_gas_status": "Status, all gas",
    "dry_N_all_particle_kg_ha": "Dry N, pairs all particle [kg N/ha]",
    "dry_N_all_particle_status": "Status, all particle",
    # exceedance.csv
    "s_dep_eq_ha_yr": "S deposition [eq/ha/yr]",
    "n_dep_eq_ha_yr": "N deposition [eq/ha/yr]",
    "ex_acidity_eq_ha_yr": "Acidity exceedance [eq/ha/yr]",
    "ex_nutrient_n_eq_ha_yr": "Nutrient-N exceedance [eq/ha/yr]",
    "region": "Region of the critical load function",
    "p_exceed_acidity": "p acidity exceeded [1]",
    "ex_acidity_eq_ha_yr_p05": "Acidity exceedance, 5 % [eq/ha/yr]",
    "ex_acidity_eq_ha_yr_p95": "Acidity exceedance, 95 % [eq/ha/yr]",
    "p_exceed_nutrient_n": "p nutrient N exceeded [1]",
    "ex_nutrient_n_eq_ha_yr_p05": "Nutrient-N exceedance, 5 % [eq/ha/yr]",
    "ex_nutrient_n_eq_ha_yr_p95": "Nutrient-N exceedance, 95 % [eq/ha/yr]",
    # trends.csv
    "n_years": "Years", "tau": "Kendall's tau [1]", "p_value": "p [1]",
    "sen_slope_per_yr": "Sen slope [kg S or N/ha/yr per yr]",
    "sen_slope_pct_per_yr": "Sen slope [% per yr]", "valid": "Valid trend",
    # input_rows.csv
    "file": "File", "reason": "Reason", "rows": "Rows", "lines": "Lines",
}


def heading_html(column, label: str | None = None) -> str:
    """The inside of a ``<th>``: the heading in words and, for a CSV column, its name on
    a small second line (also the ``title`` of the cell, see :func:`header_cell`).
    `label` overrides :data:`COLUMN_LABELS` (a table's own wording of the column)."""
    name = str(column)
    words = label or COLUMN_LABELS.get(name)
    if words is None:
        return html.escape(name)
    return f"{html.escape(words)}<br><span class='csv'>{html.escape(name)}</span>"


def header_cell(column, label: str | None = None) -> str:
    """A ``<th>`` of `column`: :func:`heading_html`, the CSV name as its ``title``."""
    name = str(column)
    if label is None and name not in COLUMN_LABELS:
        return f"<th>{html.escape(name)}</th>"
    return f"<th title='{html.escape(name, quote=True)}'>{heading_html(column, label)}</th>"
