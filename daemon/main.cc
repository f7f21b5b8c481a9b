// The spinward executable: a thin entry point; every command lives in the daemon library.
#include "spinward/daemon/cli.h"

int main(int argc, char** argv) { return spinward::daemon::RunCli(argc, argv); }
