"""Progress of a command-line run on stderr, for a person at a terminal and for a log.

On a terminal, tqdm's bar (its line redrawn with carriage returns).  On a stream that is
no terminal (stderr sent to a log file or a pipe: ``workbench run ... 2> run.log``), no
bar: tqdm's own ``disable=None`` turns it off there, and each stage of the run is one
plain line (``workbench: [2/6] precipitation samples``) instead of a log filled with
carriage-return redraws.  ``--quiet`` says nothing on either.
"""
from __future__ import annotations

import sys

#: The bar's format: no time left is shown, the steps take unequal times (the blocks
#: most of a network's run), so tqdm's estimate read "2 s left" for a minute.
BAR_FORMAT = "{l_bar}{bar}| {n_fmt}/{total_fmt} [{elapsed}{postfix}]"


class StageProgress:
    """The stages of a run, as a bar on a terminal or one line each elsewhere.

    Parameters
    ----------
    total : int
        Number of stages.
    quiet : bool
        Say nothing.
    stream : text stream, optional
        Where to write (default ``sys.stderr`` at the time of the call).
    desc : str
        The name before the bar or each line.
    """

    def __init__(self, total: int, quiet: bool = False, stream=None, desc: str = "workbench"):
        from tqdm.auto import tqdm
        self.stream = sys.stderr if stream is None else stream
        self.quiet = bool(quiet)
        self.desc = desc
        # disable=None: tqdm draws only on a terminal (file.isatty())
        self.bar = tqdm(total=int(total), desc=desc, disable=True if quiet else None,
                        delay=1.0, file=self.stream, bar_format=BAR_FORMAT)
        #: One plain line per stage: not quiet, and tqdm drew nothing (no terminal).
        self.lines = not self.quiet and bool(self.bar.disable)
        self.n = 0
        self.total = int(total)

    def step(self, text: str):
        """A stage begins: the bar moves on one, or one line is written."""
        self.n = min(self.n + 1, self.total)
        if self.lines:
            print(f"{self.desc}: [{self.n}/{self.total}] {text}", file=self.stream, flush=True)
            return
        self.bar.set_postfix_str(text)
        self.bar.update(1)

    def detail(self, text: str):
        """A finer step inside a stage (each file written, each block): on the bar only,
        a log keeps to one line per stage."""
        if not self.lines:
            self.bar.set_postfix_str(text)

    def finish(self):
        """Every stage done."""
        if not self.lines:
            self.bar.update(self.bar.total - self.bar.n)
        self.n = self.total

    def close(self):
        self.bar.close()
