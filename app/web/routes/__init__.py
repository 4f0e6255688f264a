"""Thin routers: HTTP in, one service call, a template or JSON out."""
