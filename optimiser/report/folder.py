"""Output folders: checked before the work starts, written as one set.

:func:`check_out_dir` refuses, before any design runs, an output folder that cannot be used:
a path that is a file or lies under a file, a place that cannot be written, a name longer
than the file system allows, the current folder, or a folder that holds files stowflow did
not write.

:func:`write_set` writes a set of files (the four of ``stowflow design``, the two of
``stowflow simulate --out``) so that the folder holds either the previous complete set or
the new complete set, never a mix and never a temporary file:

1. every file is written into a new folder beside the target, ``NAME.tmp-XXXXXXXX``
   (created fresh, so a planted symlink is never followed);
2. the new folder takes the target's place with one atomic exchange of the two folders
   (Linux ``renameat2(RENAME_EXCHANGE)``), or, where the file system cannot exchange, two
   renames;
3. the other command's outputs in the previous folder are moved into the new one, and the
   previous folder, now holding only the replaced set, is removed.

Ctrl+C (SIGINT) is held back from step 1 to the end and acted on right after, so an
interrupted run leaves the previous set (nothing was committed) or the new set (the commit
finished); a failed write (a full disk) removes the temporary folder and leaves the previous
set untouched.
"""

from __future__ import annotations

import contextlib
import ctypes
import errno
import os
import secrets
import shutil
import signal
import stat
import threading
from collections.abc import Iterator, Mapping
from pathlib import Path

from stowflow.errors import OutputError

__all__ = [
    "DESIGN_EXTRAS",
    "DESIGN_OUTPUTS",
    "SIMULATION_OUTPUTS",
    "check_out_dir",
    "interrupts_deferred",
    "write_set",
]

#: The files ``stowflow design`` writes (see :data:`stowflow.report.OUTPUTS`).
DESIGN_OUTPUTS: tuple[str, ...] = ("report.html", "design.json", "schedule.csv", "spec.csv")
#: Files ``stowflow design`` writes on request (``--pdf``): part of its set when written, and
#: dropped with the replaced set when a new design set comes without them.
DESIGN_EXTRAS: tuple[str, ...] = ("report.pdf",)
#: The files ``stowflow simulate --out`` writes.
SIMULATION_OUTPUTS: tuple[str, ...] = ("simulation.csv", "verification.json")
_KNOWN = DESIGN_OUTPUTS + DESIGN_EXTRAS + SIMULATION_OUTPUTS
#: Tags of the folders built beside the target: NAME.tmp-<8 hex>, NAME.old-<8 hex>.
_TMP, _OLD = ".tmp-", ".old-"
_TAG_LEN = len(_TMP) + 8
#: Longest file name when the file system does not say, [B] (ext4, xfs, btrfs, tmpfs).
_NAME_MAX = 255
_PATH_MAX = 4096


def _name_max(folder: Path) -> int:
    try:
        return int(os.pathconf(folder, "PC_NAME_MAX"))
    except (OSError, ValueError):
        return _NAME_MAX


def _existing_ancestor(path: Path) -> Path:
    """``path`` or its nearest ancestor that exists (a file or a folder)."""
    for p in (path, *path.parents):
        if os.path.lexists(p):
            return p
    return Path(path.anchor or "/")


def _carried(entry: os.DirEntry, names: tuple[str, ...]) -> bool | None:
    """What becomes of an entry of the previous folder: True carried over into the new one,
    False dropped with the replaced set, None not ours (the folder is refused).

    Nothing is followed: a symlink named like an output is dropped as a link.
    """
    name = entry.name
    if entry.is_dir(follow_symlinks=False):
        return None
    if name in names or (name.endswith(".part") and name.removesuffix(".part") in _KNOWN):
        return False  # replaced, or a temporary file of an older version
    if name in DESIGN_EXTRAS and entry.is_file(follow_symlinks=False):
        # a PDF of the previous report: dropped with it, kept beside another command's set
        return not any(n in DESIGN_OUTPUTS for n in names)
    if entry.is_file(follow_symlinks=False) and (name in _KNOWN or name.startswith(".")):
        return True  # the other command's outputs; a file manager's hidden file
    return None


def check_out_dir(
    path: str | Path, option: str = "--out", names: tuple[str, ...] = DESIGN_OUTPUTS
) -> Path:
    """Check, before any work, that a set of outputs can be written to ``path``.

    Parameters
    ----------
    path : str or Path
        The output folder as given (created with its parents when missing).
    option : str
        How the user named it, for the message (``"--out"``).
    names : tuple of str
        The files of the set that will be written.

    Returns
    -------
    pathlib.Path
        The folder with every symlink resolved (the user's own links are followed once,
        here; nothing inside the folder is ever followed).

    Raises
    ------
    OutputError
        The path is a file or lies under a file, cannot be written, has a name longer than
        the file system allows, is (or holds) the current folder, or the folder holds files
        stowflow did not write.
    """
    given = str(path)
    shown = f"{option} {given if len(given) <= 80 else given[:79] + '…'}"
    if not given.strip():
        raise OutputError(f"{option}: empty; expected a folder for the outputs")
    target = Path(os.path.realpath(path))
    if len(os.fsencode(str(target))) + _TAG_LEN >= _PATH_MAX:
        raise OutputError(f"{shown}: path too long; expected at most {_PATH_MAX - _TAG_LEN} bytes")
    base = _existing_ancestor(target)
    limit = _name_max(base if base.is_dir() else base.parent)
    for i, part in enumerate(target.parts[1:]):
        room = limit - (_TAG_LEN if i == len(target.parts) - 2 else 0)
        if len(os.fsencode(part)) > room:
            raise OutputError(
                f"{shown}: the name '{part[:40]}…' has {len(os.fsencode(part))} bytes; expected "
                f"at most {room} (the file system allows {limit}, and the outputs are built "
                f"beside it in NAME{_TMP}XXXXXXXX)"
            )
    if target.parent == target:
        raise OutputError(f"{shown}: is the root folder; expected a folder of its own")
    cwd = Path(os.path.realpath(os.getcwd()))
    if cwd == target or target in cwd.parents:
        raise OutputError(
            f"{shown}: is the current folder or holds it; expected a folder of its own for "
            "the outputs, e.g. reports/press"
        )
    if os.path.lexists(target) and not target.is_dir():
        raise OutputError(f"{shown}: is a file; expected a folder (new or holding outputs)")
    if not base.is_dir():
        raise OutputError(
            f"{shown}: {base} is a file, so no folder can be made under it; expected a folder"
        )
    if target.is_dir():
        try:
            with os.scandir(target) as entries:
                for entry in entries:
                    if _carried(entry, names) is None:
                        raise OutputError(
                            f"{shown}: the folder holds '{entry.name[:60]}', which stowflow "
                            "did not write; expected a new or empty folder, or one holding "
                            "only stowflow's outputs (they are replaced as a set)"
                        )
        except OSError as exc:
            raise OutputError(f"{shown}: cannot read the folder ({exc.strerror})") from None
        if not os.access(target, os.W_OK | os.X_OK):
            raise OutputError(f"{shown}: the folder is not writable; expected a writable folder")
    # A real write beside the target: permissions, read-only mounts, /proc and the like.
    probe_in = target.parent if target.parent.is_dir() else base
    try:
        probe = _new_folder(probe_in, ".stowflow-probe")
        os.rmdir(probe)
    except OSError as exc:
        raise OutputError(
            f"{shown}: cannot write in {probe_in} ({exc.strerror or exc}); expected a folder "
            "you may write to"
        ) from None
    return target


def _new_folder(parent: Path, stem: str) -> Path:
    """A new, empty folder ``stem.tmp-<8 hex>`` in ``parent`` (never an existing one)."""
    for _ in range(100):
        candidate = parent / f"{stem}{_TMP}{secrets.token_hex(4)}"
        try:
            os.mkdir(candidate, 0o777)
        except FileExistsError:
            continue
        return candidate
    raise FileExistsError(errno.EEXIST, "no free temporary folder name", str(parent))


_AT_FDCWD = -100
_RENAME_EXCHANGE = 2


def _exchange(a: Path, b: Path) -> bool:
    """Swap two folders atomically (Linux renameat2); False where that is not available."""
    try:
        fn = ctypes.CDLL(None, use_errno=True).renameat2
    except (AttributeError, OSError):
        return False
    fn.argtypes = (ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint)
    if fn(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE) == 0:
        return True
    code = ctypes.get_errno()
    if code in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False
    raise OSError(code, os.strerror(code), str(b))


@contextlib.contextmanager
def interrupts_deferred() -> Iterator[None]:
    """Hold back Ctrl+C (SIGINT) inside the block and act on it right after.

    Only the main thread can install signal handlers; elsewhere the block runs unchanged.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught: list[int] = []
    try:
        previous = signal.signal(signal.SIGINT, lambda signum, frame: caught.append(signum))
    except ValueError:  # pragma: no cover - not the main interpreter
        yield
        return
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous)
        if caught:
            if previous is signal.default_int_handler or previous is None:
                raise KeyboardInterrupt
            if callable(previous):
                previous(signal.SIGINT, None)
            elif previous == signal.SIG_DFL:
                os.kill(os.getpid(), signal.SIGINT)


def _commit(tmp: Path, target: Path, names: tuple[str, ...]) -> None:
    """Put the new folder ``tmp`` in the target's place; carry over the other outputs."""
    if not os.path.lexists(target):
        os.rename(tmp, target)
        return
    if _exchange(tmp, target):
        old = tmp  # the exchange left the previous folder at the temporary name
    else:
        old = target.parent / f"{target.name}{_OLD}{secrets.token_hex(4)}"
        os.rename(target, old)
        os.rename(tmp, target)
    with os.scandir(old) as entries:
        fates = [(e.name, _carried(e, names)) for e in entries]
    for name, fate in fates:
        with contextlib.suppress(OSError):
            if fate is False:
                os.unlink(old / name)
            else:  # ours to keep, or appeared after the check: never deleted
                os.rename(old / name, target / name)
    with contextlib.suppress(OSError):
        os.rmdir(old)  # only when empty: whatever could not be moved stays there


def write_set(out_dir: str | Path, texts: Mapping[str, str | bytes], option: str = "--out") -> dict:
    """Write files into ``out_dir`` as one set (see the module docstring).

    Parameters
    ----------
    out_dir : str or Path
        The output folder; created with its parents when missing.
    texts : mapping of str to str or bytes
        File name → content: text (UTF-8, written as given, no newline translation) or
        bytes (a PDF, written as they are).
    option : str
        How the user named the folder, for messages.

    Returns
    -------
    dict of str to Path
        File name → path in the output folder (as given).

    Raises
    ------
    OutputError
        The folder cannot be used (:func:`check_out_dir`) or written (e.g. a full disk);
        the previous files are then unchanged.
    """
    names = tuple(texts)
    target = check_out_dir(out_dir, option, names)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        with interrupts_deferred():
            tmp = _new_folder(target.parent, target.name)
            try:
                if target.is_dir():
                    os.chmod(tmp, stat.S_IMODE(os.stat(target).st_mode))
                for name, text in texts.items():
                    if isinstance(text, bytes):
                        with open(tmp / name, "xb") as f:
                            f.write(text)
                        continue
                    with open(tmp / name, "x", encoding="utf-8", newline="") as f:
                        f.write(text)
                _commit(tmp, target, names)
            except BaseException:
                shutil.rmtree(tmp, ignore_errors=True)
                raise
    except OSError as exc:
        raise OutputError(
            f"{option} {out_dir}: cannot write the outputs ({exc.strerror or exc}); the "
            "previous files, if any, are unchanged"
        ) from None
    out = Path(out_dir)
    return {name: out / name for name in names}
