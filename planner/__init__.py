"""scanplan: an ultrasound scan-planning assistant (decision support only).

Importing :mod:`planner` loads no user-interface code; the terminal UI lives in
:mod:`planner.tui` and is imported only when it is started.
"""

__version__ = "0.1.0"
