"""The safety caution every user-facing output carries (CLI help, report, exports)."""

CAUTION = (
    "Planning estimates only: the aircraft flight manual, the operator's approved "
    "performance methods and local regulations govern."
)
