"""The compiled physics of gvflow (private): the one home of every physical relation.

Each relation is a small scalar function compiled by numba and called from
everywhere else: the public array functions wrap it, the marchers and the
solver inline it. A section reaches this layer as data, a kind code and a
float parameter array (:mod:`gvflow._core.geometry`), so a new shape is one new
kind here and one new class in :mod:`gvflow.sections`; nothing above changes.

Modules, bottom to top: ``geometry`` (areas, widths and perimeters, whole
section and per roughness zone).
"""
