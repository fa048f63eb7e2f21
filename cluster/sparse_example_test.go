package cluster_test

import (
	"fmt"

	"warmfit/cluster"
)

// A covariance of three estimates where only the first two share shots:
// Set stores both triangles, MulVec and Do visit entries in a fixed order.
func ExampleSparseSym() {
	cov := cluster.NewSparseSym(3)
	cov.Set(0, 0, 4)
	cov.Set(1, 1, 9)
	cov.Set(2, 2, 1)
	cov.Set(0, 1, 1.5)
	y := make([]float64, 3)
	cov.MulVec(y, []float64{1, 1, 1})
	fmt.Println("row sums:", y)
	fmt.Println("cov(1,0):", cov.At(1, 0), "stored (upper triangle):", cov.NNZ())
	cov.Do(func(i, j int, v float64) { fmt.Printf("(%d,%d)=%v ", i, j, v) })
	fmt.Println()
	// Output:
	// row sums: [5.5 10.5 1]
	// cov(1,0): 1.5 stored (upper triangle): 4
	// (0,0)=4 (0,1)=1.5 (1,1)=9 (2,2)=1
}
