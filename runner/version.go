package runner

// Version of the program, recorded in every run.
const Version = "0.1.0"
