package pricing

// grantChunk is how many consecutive grants one goroutine of cores.Chunks
// takes at a time: enough that a chunk's cost dwarfs taking it, few
// enough that the cores finish together.
const grantChunk = 128
