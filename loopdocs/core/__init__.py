"""The shared layer every stage may use: input errors, findings and cell locations, safe
output file names, atomic file writes, and the caution wording every field output carries."""
