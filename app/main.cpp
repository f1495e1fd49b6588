// repel command-line front end: parses options, reads input, calls the library, writes output. No chemistry here.
#include <cstdio>
int main() { std::puts("repel"); return 0; }
