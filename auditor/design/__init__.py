"""Design adequacy: spread metrics, power, lack of fit, drop-one, claims, advice, planner."""
