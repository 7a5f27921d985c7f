"""Read a ``multipart/form-data`` upload as it streams in, with limits checked on the way.

:func:`read_form` feeds the request body chunk by chunk to python-multipart's push parser and
counts while it goes: the bytes of the whole body, the lines of each file that has a line
limit, the parts and the size of each text field.  The first limit crossed stops the reading
with an :class:`UploadError` (HTTP 413 for amounts, 400 for a malformed form, 415 for another
content type); the rest of the body is never read and nothing is written to disk.  Only known
field names are accepted.  A file's name is kept as text for messages; it never becomes a path.

The content of the files is checked by the library afterwards
(:func:`stowflow.cycle.duty.parse_cycle_bytes` refuses binary, non-UTF-8, empty and malformed
tables and counts the data rows exactly); the line count here is the early, streaming bound.
"""

from __future__ import annotations

from collections.abc import AsyncIterator, Collection, Mapping
from dataclasses import dataclass, field

from python_multipart.exceptions import FormParserError
from python_multipart.multipart import MultipartParser, parse_options_header
from stowflow.errors import StowflowError

__all__ = ["FilePart", "UploadError", "UploadedForm", "megabytes", "read_form"]

#: Most parts one form may have, [-].
MAX_PARTS = 64
#: Most bytes one text field may hold, [B].
MAX_FIELD_BYTES = 2_000


class UploadError(StowflowError):
    """The upload itself is refused (too large, too many lines, malformed, wrong type).

    Attributes
    ----------
    status : int
        HTTP status code to answer with.
    """

    def __init__(self, message: str, status: int = 400) -> None:
        super().__init__(message)
        self.status = status


@dataclass(frozen=True)
class FilePart:
    """One uploaded file.

    Attributes
    ----------
    filename : str
        The name the browser sent (text for messages, never a path).
    data : bytes
        The content.
    """

    filename: str
    data: bytes


@dataclass
class UploadedForm:
    """The fields of an upload: text by field name, files by field name."""

    fields: dict[str, str] = field(default_factory=dict)
    files: dict[str, FilePart] = field(default_factory=dict)


def megabytes(n_bytes: int) -> str:
    """``5000000`` → ``"5 MB"`` (decimal megabytes, as a file manager shows them)."""
    return f"{n_bytes / 1e6:g} MB"


class _Counter:
    """The callbacks of the push parser: collects parts and checks the per-part limits."""

    def __init__(
        self,
        text_fields: Collection[str],
        file_fields: Collection[str],
        max_lines: Mapping[str, tuple[int, int]],
    ) -> None:
        self.form = UploadedForm()
        self.text_fields = set(text_fields)
        self.file_fields = set(file_fields)
        self.max_lines = dict(max_lines)
        self.parts = 0
        self._header_name = bytearray()
        self._header_value = bytearray()
        self._headers: dict[bytes, bytes] = {}
        self._name = ""
        self._filename: str | None = None
        self._data = bytearray()
        self._lf = self._cr = 0

    # -- python-multipart callbacks ---------------------------------------------------------
    def on_part_begin(self) -> None:
        self.parts += 1
        if self.parts > MAX_PARTS:
            raise UploadError(f"form has more than {MAX_PARTS} parts; expected this page's form")
        self._headers = {}
        self._name, self._filename = "", None
        self._data = bytearray()
        self._lf = self._cr = 0

    def on_header_field(self, data: bytes, start: int, end: int) -> None:
        self._header_name += data[start:end]

    def on_header_value(self, data: bytes, start: int, end: int) -> None:
        self._header_value += data[start:end]

    def on_header_end(self) -> None:
        self._headers[bytes(self._header_name).lower()] = bytes(self._header_value)
        self._header_name, self._header_value = bytearray(), bytearray()

    def on_headers_finished(self) -> None:
        kind, options = parse_options_header(self._headers.get(b"content-disposition"))
        if kind != b"form-data" or b"name" not in options:
            raise UploadError("a form part has no field name; expected this page's form")
        self._name = options[b"name"].decode("utf-8", errors="replace")
        raw_filename = options.get(b"filename")
        self._filename = None if raw_filename is None else _display_name(raw_filename)
        known = self.file_fields if self._filename is not None else self.text_fields
        if self._name not in known:
            what = "file" if self._filename is not None else "field"
            raise UploadError(f"unknown form {what} '{self._name[:40]}'; expected this page's form")
        if self._name in self.form.fields or self._name in self.form.files:
            raise UploadError(f"form field '{self._name}' given twice")

    def on_part_data(self, data: bytes, start: int, end: int) -> None:
        chunk = data[start:end]
        if self._filename is None and len(self._data) + len(chunk) > MAX_FIELD_BYTES:
            raise UploadError(
                f"form field '{self._name}' is longer than {MAX_FIELD_BYTES} bytes", status=413
            )
        limit = self.max_lines.get(self._name)
        if limit is not None:
            # Lines end in LF, CRLF or a lone CR; the larger count bounds the number of lines.
            self._lf += chunk.count(b"\n")
            self._cr += chunk.count(b"\r")
            lines, rows = limit
            if max(self._lf, self._cr) > lines:
                raise UploadError(
                    f"{self._filename or self._name}: too many lines, more than {lines} "
                    f"(comments and blank lines included); expected at most {rows} data rows",
                    status=413,
                )
        self._data += chunk

    def on_part_end(self) -> None:
        if self._filename is None:
            try:
                self.form.fields[self._name] = bytes(self._data).decode("utf-8")
            except UnicodeDecodeError:
                raise UploadError(f"form field '{self._name}' is not UTF-8 text") from None
        elif self._filename or self._data:
            self.form.files[self._name] = FilePart(self._filename, bytes(self._data))

    def callbacks(self) -> dict:
        return {
            name: getattr(self, name)
            for name in (
                "on_part_begin",
                "on_header_field",
                "on_header_value",
                "on_header_end",
                "on_headers_finished",
                "on_part_data",
                "on_part_end",
            )
        }


def _display_name(raw: bytes) -> str:
    """A browser's file name as short, printable text: the last path component only."""
    text = raw.decode("utf-8", errors="replace")
    text = text.replace("\\", "/").rsplit("/", 1)[-1]
    text = "".join(ch for ch in text if ch.isprintable())
    return text[:80]


async def read_form(
    headers: Mapping[str, str],
    stream: AsyncIterator[bytes],
    *,
    max_bytes: int,
    text_fields: Collection[str],
    file_fields: Collection[str],
    max_lines: Mapping[str, tuple[int, int]] | None = None,
) -> UploadedForm:
    """Read a form upload from a body stream, stopping at the first limit crossed.

    Parameters
    ----------
    headers : mapping
        Request headers (lower-case names): ``content-type``, optionally ``content-length``.
    stream : async iterator of bytes
        The request body as it arrives.
    max_bytes : int
        Most bytes the whole body may have, [B].
    text_fields, file_fields : collection of str
        Accepted field names; any other name is refused.
    max_lines : mapping, optional
        File field → (most lines, most data rows the message quotes), [-].

    Returns
    -------
    UploadedForm
        Text fields and files (a file input left empty is absent).

    Raises
    ------
    UploadError
        Wrong content type (415), body or field too large or too many lines (413), malformed
        form or unknown field (400).
    """
    kind, params = parse_options_header(headers.get("content-type"))
    if kind != b"multipart/form-data":
        shown = kind.decode("latin-1")[:60] or "nothing"
        raise UploadError(f"expected a form upload (multipart/form-data), got {shown}", status=415)
    boundary = params.get(b"boundary")
    if not boundary:
        raise UploadError("form upload without a boundary; expected this page's form")
    too_big = UploadError(
        f"upload too large: more than {megabytes(max_bytes)}; expected at most "
        f"{megabytes(max_bytes)} for the cycle, the catalogue and the settings together",
        status=413,
    )
    declared = headers.get("content-length")
    if declared is not None:
        try:
            length = int(declared)
        except ValueError:
            raise UploadError(f"Content-Length '{declared[:20]}' is not a number") from None
        if length > max_bytes:
            raise too_big  # refused before a byte of the body is read
    counter = _Counter(text_fields, file_fields, max_lines or {})
    try:
        parser = MultipartParser(boundary, counter.callbacks())
    except FormParserError:
        raise UploadError("form upload with a malformed boundary") from None
    received = 0
    try:
        async for chunk in stream:
            received += len(chunk)
            if received > max_bytes:
                raise too_big
            parser.write(chunk)
        parser.finalize()
    except FormParserError:
        raise UploadError("malformed form upload; expected this page's form") from None
    return counter.form
