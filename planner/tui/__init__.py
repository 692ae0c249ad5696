"""The terminal UI (Textual). The only package of scanplan that imports Textual."""
