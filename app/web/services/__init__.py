"""Services own the transactions: routes call one function, which validates, writes and commits."""
