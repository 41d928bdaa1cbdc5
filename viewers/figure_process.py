"""A figure drawn in a process of its own, forked before the engine loads.

A command that ends with a figure spends its first second or more importing the engine on one
core; a process forked before that imports matplotlib (about 0.7 s of CPU) and draws a throwaway
figure on the other core meanwhile, so the figure at the end costs only its own drawing. Where a
fork is not safe (physics.analysis.forking) or the process is gone, the figure is drawn here.
"""
from __future__ import annotations

import importlib
import multiprocessing
import os
import signal

from trapscape.physics.analysis.forking import end_with, fork_is_safe


class FigureProcess:
    """A forked process that imports `module`, runs its ``warm_up()``, then runs the module's
    functions it is asked to; a context manager that ends the process.

    Parameters
    ----------
    module : str
        The module of the drawing functions, e.g. "trapscape.viewers.screen_plot".
    """

    def __init__(self, module: str):
        self.module = module
        self.connection = self.process = None
        if not fork_is_safe():
            return
        context = multiprocessing.get_context("fork")
        self.connection, theirs = context.Pipe()
        self.process = context.Process(target=_serve, daemon=True,
                                        args=(theirs, self.connection, module, os.getpid()))
        self.process.start()
        theirs.close()

    def call(self, name: str, *args):
        """The module's function `name` called with `args` in the figure's process, or here when
        there is none; its exception is raised here.

        Parameters
        ----------
        name : str
        *args : picklable

        Returns
        -------
        object
            What the function returned.
        """
        if self.connection is not None:
            try:
                self.connection.send((name, args))
                done, value = self.connection.recv()
            except (OSError, EOFError):  # the process is gone: draw here
                self.close()
            else:
                if done:
                    return value
                raise value
        return getattr(importlib.import_module(self.module), name)(*args)

    def close(self) -> None:
        """End the process: idle or still warming up, or drawing for a call cut short by
        Ctrl-C (it ends through its `finally` blocks: no temporary file is left)."""
        if self.connection is None:
            return
        self.process.terminate()
        self.process.join()
        self.connection.close()
        self.connection = None

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
        return False


def _serve(connection, parents_end, module, parent) -> None:
    # Ctrl-C reaches the whole process group: the parent handles it and still asks for the
    # figure of what finished; SIGTERM (also the parent's end) ends this process through its
    # `finally` blocks, so a figure being written leaves no temporary file
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, _end_now)
    end_with(parent)
    parents_end.close()
    functions = importlib.import_module(module)
    functions.warm_up()
    while True:
        try:
            name, args = connection.recv()
        except EOFError:
            return
        try:
            reply = (True, getattr(functions, name)(*args))
        except Exception as error:  # noqa: BLE001  raised in the parent
            reply = (False, error)
        connection.send(reply)


def _end_now(signum, frame):
    raise SystemExit(1)
