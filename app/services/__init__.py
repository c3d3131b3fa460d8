"""Orchestration, one module per resource: validated request -> physics inputs -> physics -> data.

budget.py (budgets, batches' helpers), clock.py (the oscillator's time error), contacts.py
(contact plans), stability.py (measured data), orbits.py (the one registry of orbit types).
No HTTP here; ``PhysicsInputError`` passes through to the caller, which maps it.
"""
