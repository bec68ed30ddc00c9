"""`python -m bankbuild`: the command line."""

from bankbuild.cli.app import main

main()
