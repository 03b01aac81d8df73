Console.WriteLine("forecast");
