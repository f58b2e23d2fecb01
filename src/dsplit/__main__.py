"""``python -m dsplit`` runs the command line."""

from dsplit.cli import main

main()
