package melting

// Update is the -update flag of the package's tests, for the external test
// package (which cannot define a flag of the same name).
var Update = update
