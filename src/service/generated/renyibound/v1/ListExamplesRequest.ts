// Original file: proto/renyibound/v1/examples.proto


export interface ListExamplesRequest {
}

export interface ListExamplesRequest__Output {
}
