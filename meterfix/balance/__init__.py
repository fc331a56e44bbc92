"""The system balance: receipts against deliveries, own use, fixed quantities and linepack.

Stage 9 (beside fleet and store): pure functions over each meter's month (its gas-day table and
its uncertainty split into random and systematic parts), the linepack inputs and the fixed
quantities. The CLI (``meterfix balance``) composes the fleet run, the store and this package.

Modules: config (the balance TOML), linepack (gas held in a section), ufg (daily and monthly
unaccounted-for gas and its GUM uncertainty), search (which meter, on evidence), reconcile
(VDI 2048-1 data reconciliation), compute (everything into one BalanceResult), writers (the
balance workbook, JSON and daily CSV).
"""
