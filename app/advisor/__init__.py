"""The design advisor: targets, sensitivities, the value that meets a target, spread, report."""
