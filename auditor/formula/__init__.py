"""Formula text: tokens, the syntax tree, the one A1 <-> R1C1 converter."""
