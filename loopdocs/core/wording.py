"""Wording shared by every output that reaches the field (sheets, package, workbooks,
terminal): the caution that values are to be confirmed and the site's rules prevail."""

CAUTION = (
    "Values are to be confirmed against the issued design. Isolate and verify before any "
    "work on live plant; local codes, site procedures and licensed engineering practice prevail."
)
