"""Qt item models over core results: the flag list, the working-data grid and the ledger.

Each model reads core objects (``Flag``, ``WorkingData``, ``LedgerEntry``) as they are and
formats cells only when a view asks for them, so large waves cost nothing up front.
"""
