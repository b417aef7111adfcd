"""The terminal of the command line: stderr whose open line an error ends first, and
Ctrl-C (SIGINT) while dask's garbage-collector callback runs.

Part of :mod:`workbench.cli`, which re-exports every name here.
"""
from __future__ import annotations

import sys


class _LineEnd:
    """A text stream written through, knowing whether its last line is still open (text
    written since the last newline).

    ``main`` puts it in place of ``sys.stderr`` for a command, so that an error always
    starts on a line of its own, in a terminal and piped: a progress bar shown by a
    refresh before its ``delay`` has passed (tqdm) closes without its newline.
    """

    def __init__(self, stream):
        self.stream = stream
        self.open = False

    def write(self, text):
        if text:
            self.open = not text.endswith("\n")
        return self.stream.write(text)

    def end_line(self):
        """Write a newline if the last line is open."""
        if self.open:
            self.stream.write("\n")
            self.open = False

    def __getattr__(self, name):          # flush, fileno, isatty, encoding, ...
        return getattr(self.stream, name)


class _PipeWatch:
    """A text stream written through, knowing whether a write or flush met a closed pipe
    (BrokenPipeError): the reader of a pipe has gone, as ``head`` does after its lines.

    ``main`` puts it in place of ``sys.stdout`` for a command, so that a broken pipe of
    stdout (the user's reader is done) ends the command quietly, where one of another
    stream (a socket, a file) is still an error to report.
    """

    def __init__(self, stream):
        self.stream = stream
        self.broken = False

    def write(self, text):
        try:
            return self.stream.write(text)
        except BrokenPipeError:
            self.broken = True
            raise

    def flush(self):
        try:
            return self.stream.flush()
        except BrokenPipeError:
            self.broken = True
            raise

    def __getattr__(self, name):          # fileno, isatty, encoding, ...
        return getattr(self.stream, name)


def _quiet_stdout(stream):
    """Point the file descriptor of `stream` (the real stdout) at os.devnull, so that
    the interpreter's own flush at exit meets no closed pipe: what the Python docs
    recommend for a closed stdout (signal module, "Note on SIGPIPE").  A stream without
    a file descriptor (a test's capture) is left as it is."""
    import os
    try:
        fd = stream.fileno()
    except (AttributeError, OSError, ValueError):
        return
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        os.dup2(devnull, fd)
    finally:
        os.close(devnull)


def _end_line():
    """End an open line on stderr (see :class:`_LineEnd`)."""
    if isinstance(sys.stderr, _LineEnd):
        sys.stderr.end_line()


def _in_gc_callback(frame) -> bool:
    """Whether `frame` runs inside a callback of the garbage collector."""
    import gc
    codes = set()
    for cb in gc.callbacks:
        fn = getattr(cb, "__func__", cb)
        code = getattr(fn, "__code__", None)
        if code is not None:
            codes.add(code)
    while frame is not None and codes:
        if frame.f_code in codes:
            return True
        frame = frame.f_back
    return False


def _on_ctrl_c(signum, frame):
    """SIGINT: KeyboardInterrupt, as Python's own handler, except inside a callback of
    the garbage collector (dask's scheduler hooks one into this process), where the
    exception would be printed as "ignored" and the run would go on to its end: there
    the signal is sent again 20 ms later, once the callback has returned."""
    if _in_gc_callback(frame):
        import signal
        import threading
        timer = threading.Timer(0.02, signal.raise_signal, (signal.SIGINT,))
        timer.daemon = True
        timer.start()
        return
    raise KeyboardInterrupt


def _catch_ctrl_c():
    """Install :func:`_on_ctrl_c` where Python's own SIGINT handler is in force (the main
    thread); returns the handler to restore, or None."""
    import signal
    import threading
    if threading.current_thread() is not threading.main_thread() or \
            signal.getsignal(signal.SIGINT) is not signal.default_int_handler:
        return None
    return signal.signal(signal.SIGINT, _on_ctrl_c)
