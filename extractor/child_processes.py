"""Worker processes that end with the process that started them.

A process pool's workers wait on a pipe for their next call. When the parent is killed
with SIGKILL it cannot stop them, and the workers hold the pipe's other end themselves,
so they never see it close: they sleep on as orphans (or finish a long simulation run
nobody will read). :func:`end_with_parent`, given as the pool's initializer, asks the
kernel to kill the worker when its parent ends (``PR_SET_PDEATHSIG``, prctl(2)).
"""

from __future__ import annotations

import ctypes
import os
import signal
import sys

PR_SET_PDEATHSIG = 1
"""prctl(2) option: the signal the calling process gets when its parent ends (linux/prctl.h)."""


def end_with_parent(parent: int) -> None:
    """Have this worker killed when ``parent`` ends; end now if it has ended already.

    Give it to a process pool as its initializer, with the parent's PID. The signal is
    tied to the thread that started the worker; pools start their workers from the
    thread that submits the first call, which here is the thread that waits for the
    results. Outside Linux it does nothing.
    """
    if not sys.platform.startswith("linux"):
        return
    libc = ctypes.CDLL(None, use_errno=True)
    libc.prctl(PR_SET_PDEATHSIG, signal.SIGKILL)
    if os.getppid() != parent:
        os._exit(1)
