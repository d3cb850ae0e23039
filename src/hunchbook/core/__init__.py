"""Pure computational core: rule files, expressions, market data, continuous series, engine."""
