"""Instance generators: random resting arrangements and planted optima (issue 5).

- `random_instance(dim, boxes, seed, **params) -> Instance`
- `planted_instance(dim, boxes, seed, **params) -> (Instance, Plan)`

Same arguments, same instance: every draw comes from one numpy Generator seeded with `seed`.
"""
from .arrangement import random_instance
from .classes import class_names, find_class
from .planted import planted_instance

__all__ = ["random_instance", "planted_instance", "class_names", "find_class"]
