"""Analysis views: time-constant bars, the exact response, the verdict strip, the test picture."""
