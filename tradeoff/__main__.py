"""Allow `python -m tradeoff`."""
from tradeoff.cli import main

main()
