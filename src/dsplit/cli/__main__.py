"""``python -m dsplit.cli`` runs the command line."""

from dsplit.cli import main

main()
