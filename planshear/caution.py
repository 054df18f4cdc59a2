"""The caution printed by the CLI and written into every result and report."""

CAUTION = (
    "planshear results are an aid to design, not a design. They must be reviewed and "
    "accepted by a licensed engineer, and the governing local building code and its "
    "referenced standards take precedence over anything this program reports."
)
