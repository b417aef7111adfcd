"""The line a notebook opened again shows in place of an app that is not running.

An app is shown with a second output under it (:meth:`workbench.ui.controls.SavedText.
_ipython_display_`): :func:`saved_hint`, whose own style hides it while the app is
drawn.  Measured in chromium (JupyterLab 4.6, ipywidgets 8.1): without it a notebook
run, saved and opened again read "Error displaying widget: model not found" in each
app's place.
"""
from __future__ import annotations

import html

__all__ = ["APP_CLASS", "HINT_CLASS", "DISCONNECTED", "HINT_CSS", "saved_hint"]

#: Class of every app's box in the page (:meth:`workbench.ui.controls.SavedText._ipython_display_`).
APP_CLASS = "wb-app"
#: Class of the line a saved notebook shows in place of an app that is not running.
HINT_CLASS = "wb-saved-hint"
#: The hint's style (CSS :has(), chromium 105, Firefox 121, Safari 15.4): in an output
#: area holding a drawn app, hide the hint; in one holding the hint and no drawn app,
#: hide the widget manager's line in the app's place ("Error displaying widget: model
#: not found").  (A :has() inside another :has() is no valid CSS: a first rule
#: written so was dropped by chromium whole.)
#:
#: Where JupyterLab saved the widgets' state with the notebook (Settings > Save Widget
#: State Automatically), the app opened again is drawn from it, every widget of it
#: marked with ipywidgets' red broken-link sign (30 in the network overview; a dead
#: widget that tries to send gets ipywidgets' "no comm channel defined", none seen in the
#: console on opening).  There the app's figures
#: and tables stay as saved, the signs inside the app go, and one line over the app and
#: the hint under it say that it is not running (so too after its kernel stopped).
DISCONNECTED = "jupyter-widgets-disconnected"     # ipywidgets' class of a dead view
HINT_CSS = (f"<style>.jp-OutputArea:has(.{APP_CLASS}) .{HINT_CLASS} {{display: none;}} "
            f".jp-OutputArea:has(.{HINT_CLASS}):not(:has(.{APP_CLASS})) "
            ".jp-OutputArea-output.jupyter-widgets {display: none;} "
            f".jp-OutputArea:has(.{APP_CLASS}.{DISCONNECTED}) .{HINT_CLASS} "
            "{display: block;} "
            f".{APP_CLASS}.{DISCONNECTED} .{DISCONNECTED}::before {{display: none;}} "
            f".{APP_CLASS}.{DISCONNECTED}::before {{content: 'Not running (a saved view, or "
            "its kernel stopped): run the cells (Run > Run All Cells) to use it.'; font: italic 13px "
            "sans-serif; color: #555; padding: 0 0 4px 0;}</style>")


def saved_hint(text: str) -> dict:
    """The output shown under an app: `text` (:meth:`SavedText.saved_text`) as HTML with
    :data:`HINT_CSS`, seen only where the app is not drawn (a notebook opened again
    after its kernel stopped).  Its plain text is empty: a viewer of plain text shows
    the app's own line (:meth:`SavedText.saved_text`) once."""
    return {"text/plain": "", "text/html": f"{HINT_CSS}<div class='{HINT_CLASS}' style='color:#555;"
                         f"font-style:italic'>{html.escape(text)}</div>"}
