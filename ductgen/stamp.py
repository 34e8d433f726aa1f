"""The build date stamped into output files, reproducibly.

``SOURCE_DATE_EPOCH`` (seconds since 1970-01-01 UTC; the reproducible-builds convention,
https://reproducible-builds.org/specs/source-date-epoch/) sets it when present; otherwise it
is today at 00:00 UTC, so two builds of the same spec on the same day give byte-identical
files. Where it appears: the template's text block and assembly page, the drawing sheet's
title block, the PDFs' ``CreationDate``, the STEP header's ``FILE_NAME`` time stamp and the
DXF header's ``$TDCREATE`` / ``$TDUPDATE``.
"""

from __future__ import annotations

import datetime as _dt
import os

__all__ = ["build_date", "build_datetime"]


def build_datetime() -> _dt.datetime:
    """``SOURCE_DATE_EPOCH`` as an aware UTC datetime, or today 00:00 UTC."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if epoch.isdigit():
        return _dt.datetime.fromtimestamp(int(epoch), tz=_dt.timezone.utc)
    today = _dt.datetime.now(tz=_dt.timezone.utc).date()
    return _dt.datetime(today.year, today.month, today.day, tzinfo=_dt.timezone.utc)


def build_date() -> str:
    """The build date as ``YYYY-MM-DD`` (UTC)."""
    return build_datetime().date().isoformat()
