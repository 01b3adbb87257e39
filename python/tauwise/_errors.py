"""The exceptions tauwise raises beside ValueError and OSError."""


class FileContentError(OSError, ValueError):
    """A file was read but refused: a line that is not a reading, a unit that
    disagrees with the header, time stamps that do not fit τ0, a DUT file
    against its schema. The message names the file and the line.

    It is an ``OSError`` (a problem with a file) and a ``ValueError`` (bad
    input), so either ``except`` clause catches it.
    """
