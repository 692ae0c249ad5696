"""Body model: habitus (BMI, WHO class), body-wall layers per window, conditions, layer stacks."""
