"""Golden results: pinlib's JSON outputs saved before the issue-12 redesign, and the
comparison that holds every later run to them (see README.md here)."""
