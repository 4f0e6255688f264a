"""The Clampdown web app: parts library, fixtures, channels and revisions, findings pages.

Layout: config (settings), db (engine, sessions, migrations), models (tables), security
(passwords, session cookie, CSRF), deps (what routes receive), services/ (transactions),
routes/ (thin HTTP handlers), templating (Jinja), main (the application object).
"""
