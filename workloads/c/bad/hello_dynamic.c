/* A dynamically linked hello: the loader's dynamic-executable fixture. */
#include <stdio.h>

int main(void)
{
	puts("hello from a dynamically linked RISC-V program");
	return 0;
}
