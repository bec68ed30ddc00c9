"""The orderable assembly: step plan, detuning reactors, switching, control, enclosure and the bill of materials.

Each module is pure: functions over results and rating-table rows, no file access. The pipeline
(:mod:`bankbuild.bank`) calls :func:`bankbuild.assembly.build.assemble_bank` once a bank is sized.

This ``__init__`` imports nothing, so that the table registry (:mod:`bankbuild.catalog_schema`) can import
:mod:`bankbuild.assembly.tables` without an import cycle.
"""
