fn main() {
    println!("embloom: under construction");
}
