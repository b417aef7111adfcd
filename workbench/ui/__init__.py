"""Figures (pure functions: Dataset in, plotly figure out) and ipywidgets apps."""
