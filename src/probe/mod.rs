//! Downstream probes: a k-NN classifier and a multinomial logistic regression.
