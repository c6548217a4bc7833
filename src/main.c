/* ferrocirc — command-line entry point; all logic is in src/cli*.c. */
#include "cli.h"

int main(int argc, char **argv) { return fci_cli_main(argc, argv); }
