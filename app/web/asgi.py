"""The ASGI application for `uvicorn app.web.asgi:app` (several workers share one database)."""

from .main import create_app

app = create_app()
