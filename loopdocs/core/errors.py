"""Errors that end a command with a one-line reason (exit code 2), never a traceback."""


class InputError(Exception):
    """The input could not be read or understood as a whole (file, sheet, config).

    The message is one line that names the file (and sheet, row or column where known)
    and what to do about it. Problems with single cells are findings, not InputErrors.
    """
