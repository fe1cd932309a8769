"""Command-line interface. Thin: parse, call the library, print or write."""
