"""Everything that touches the disk or the environment: plan files (TOML), catalog folders (YAML),
counts files (CSV), provenance and sharing of plans between labs, user folders, atomic writes."""
