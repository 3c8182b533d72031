"""Data files of the lunisolar plugin (attestation tables with their sources)."""
