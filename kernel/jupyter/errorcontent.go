package jupyter

// ErrorContent returns the ename, evalue and traceback of the error message
// the kernel publishes for a cell that failed with err: the text made safe
// to print, and the first traceback line in bold red for an *ExecError with
// Headline set. The headless runner writes the same into a notebook.
func ErrorContent(err error) (ename, evalue string, traceback []string) {
	ename, evalue, traceback = errorFields(err)
	return ename, evalue, headline(err, traceback)
}
