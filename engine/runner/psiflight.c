/* psiflight.c - entry point of the headless runner.  Kept nearly empty, as in
 * lua.c: all the work, and all error reporting, happens in pfr_main. */
#include "pfr_run.h"

int main(int argc, char **argv)
{
    return pfr_main(argc, argv);
}
