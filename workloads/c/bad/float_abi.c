/* A kernel built for the double-float ABI (lp64d): the loader's float-ABI
 * fixture. */
double scale(double x, double y) { return x * y + 0.5; }

int main(void) { return (int)scale(3.0, 4.0); }
