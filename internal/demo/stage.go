package demo

// StageSpec is what the demo asks of a transistor stage in one band (the
// demo's own numbers, invented for its scenario): the least gain, the
// largest noise figure and the least input and output return losses in
// dB, and how many parts each side's network may have.
type StageSpec struct {
	Band                        Band
	MinGainDB, MaxNFdB          float64
	MinInputRLdB, MinOutputRLdB float64
	PartsPerSide                int
}

// LNAStage is Wristtag's low-noise stage: across the 2.4 GHz ISM band at
// least 12 dB of gain and at most 1.5 dB of noise figure from the 50 Ω
// antenna side, 8 dB of return loss at the input (a low-noise match is a
// compromise with the gain match) and 15 dB at the output into the 50 Ω
// radio, with up to two typical 0402 parts a side. The band's own
// return-loss limit is the input's 8 dB, which the matching workbench
// shows for either network.
var LNAStage = StageSpec{
	Band:      Band{LNABand.Name, LNABand.LoHz, LNABand.HiHz, 8},
	MinGainDB: 12, MaxNFdB: 1.5, MinInputRLdB: 8, MinOutputRLdB: 15,
	PartsPerSide: 2,
}
