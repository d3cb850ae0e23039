"""pyqtgraph charts of run results."""
