"""The files the web app needs at run time — templates, static files, migrations and the demo's
seed data — live at the top of the repository. setuptools maps each into the package as
app.web._shipped.NAME, so `pip install .` (a wheel) carries them; see app.web.config.shipped()."""

from setuptools import find_packages, setup

SHIPPED = ("templates", "static", "migrations", "seed_data")

setup(
    packages=find_packages(include=["app", "app.*"]) + [f"app.web._shipped.{name}" for name in SHIPPED],
    package_dir={f"app.web._shipped.{name}": name for name in SHIPPED},
    package_data={f"app.web._shipped.{name}": ["**/*"] for name in SHIPPED},
    exclude_package_data={"": ["__pycache__/*", "*.pyc"]},
)
