"""The desktop window: PySide6 widgets, item models and workers over the Python API."""
