/* A shared library without the entry point: plateau must say so. */

__attribute__((visibility("default"))) int plateau_closure_entry_misspelt(void) { return 0; }
