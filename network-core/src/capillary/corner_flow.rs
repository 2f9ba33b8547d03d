//! Conductances of corner films and of the bulk phase in the centre.
