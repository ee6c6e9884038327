"""Lower bounds on the objective of an unstack-and-pack instance."""
