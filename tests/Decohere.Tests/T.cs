public class T { [Fact] public void A(){} }
