"""Driven machines as torque-speed curves referred to the motor shaft.

A load answers one question: what torque does it take at the motor shaft at a given motor
speed? Every load here is a small frozen dataclass with

- ``torque(speed)``: load torque [N*m] at the motor shaft, vectorized over motor speed [rad/s];
- ``slope(speed)``: its derivative dT/dw [N*m*s/rad], analytic, used to judge stability;
- ``breakaway_torque``: the torque [N*m] the motor must exceed to start in the positive
  direction from rest;
- ``inertia``: the load's moment of inertia referred to the motor shaft [kg*m^2];
- ``kind`` and ``describe()``: a short tag and a one-line description in words.

Two loads add (``fan + friction``) into a :class:`SumLoad`.

Signs: motoring is positive. A load torque is positive when it opposes positive rotation. Passive
loads (friction, fans, pumps) oppose the motion in either direction, so their torque changes sign
with speed (odd symmetry, stated per class). Active loads (gravity on a hoist, the lift share of
an inclined conveyor) keep their sign whatever the direction.

Gearing: each load sits behind an optional :class:`Gearing`; its own parameters (torques, speeds,
inertia) are those of the driven machine's shaft. ``gearing=None`` means direct coupling.

References
----------
.. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed., ch. 2 (loads with rotational
   and translational motion referred through gears; active and passive load torques), Ex. 2.1,
   p. 16.
"""

from .analytic import (Breakaway, ConstantPower, ConstantTorque, Conveyor, Fan, Hoist, Linear, LoweringHoist,
                       Pump, Quadratic, affinity_flow, affinity_head, affinity_power)
from .base import STANDARD_GRAVITY, Gearing, Load, SumLoad
from .supplied import FormulaLoad, TableLoad

__all__ = [
    "Gearing", "Load", "ConstantTorque", "Conveyor", "Hoist", "LoweringHoist", "Quadratic", "Fan", "Pump",
    "Linear", "ConstantPower", "Breakaway", "SumLoad", "TableLoad", "FormulaLoad",
    "affinity_flow", "affinity_head", "affinity_power", "STANDARD_GRAVITY",
]
