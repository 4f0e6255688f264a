"""Review and sign-off: the workflow states, the hash-chained trail, revision compare.

The modules here are pure (no database, no web); app.web stores and shows what they decide.
"""
