"""Errors raised by ingest when a document cannot be read at all.

A row that cannot be read is not an error here: it becomes a rejected row and the rest go on.
"""


class IngestError(Exception):
    """The whole document (or the named part of it) cannot be read. The message is for the user:
    it names the file (and page or sheet) and says what to do; it never needs a traceback."""
