// Command ordplan runs declarative analysis plans for ordered outcomes:
// it fits the models a plan lists, applies the plan's decision rules and
// writes a report. `ordplan fit` fits one model from the command line.
package main
