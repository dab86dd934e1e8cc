"""The code clauses as plain functions: EN 1997-1 (ec7) and EN 1992-1-1 (ec2)."""
